using System.Globalization;
using System.Text;
using ParquetSharp;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>
/// CSV copies of written Parquet tables: <c>name.csv</c> beside <c>name.parquet</c>, same columns in the same order,
/// read back column by column (so every table of every command is exported by one routine, whatever wrote it).
/// RFC 4180 text: comma-separated, a header row, text quoted when it holds a comma, quote or line break; numbers in the
/// invariant culture, doubles in their shortest round-trip form ("R": parsing gives back the same double); an empty field
/// for null. Written atomically.
/// </summary>
public static class CsvExport
{
    /// <summary>The table formats a command can write.</summary>
    public const string Formats = "parquet, csv";

    /// <summary>Parses a <c>--format</c> list ("parquet,csv"); returns whether CSV copies are wanted. Parquet is always written.</summary>
    /// <exception cref="InputException">An unknown format; the message names the setting "format".</exception>
    public static bool WantsCsv(string? formats)
    {
        bool csv = false;
        foreach (var f in (formats ?? "parquet").Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))
        {
            if (f.Equals("csv", StringComparison.OrdinalIgnoreCase)) csv = true;
            else if (!f.Equals("parquet", StringComparison.OrdinalIgnoreCase))
                throw new InputException($"format: '{f}' is not a table format; expected a list of {Formats}");
        }
        return csv;
    }

    /// <summary>Writes a CSV beside every <c>.parquet</c> among <paramref name="paths"/>; returns the CSV paths.</summary>
    public static IReadOnlyList<string> Beside(IEnumerable<string> paths, CancellationToken cancel = default)
    {
        var written = new List<string>();
        foreach (var parquet in paths.Where(p => p.EndsWith(".parquet", StringComparison.Ordinal)).ToArray())
        {
            cancel.ThrowIfCancellationRequested();
            string csv = Path.ChangeExtension(parquet, ".csv");
            AtomicFile.Write(csv, tmp => Convert(parquet, tmp, cancel));
            written.Add(csv);
        }
        return written;
    }

    /// <summary>Writes the CSV text of one Parquet file.</summary>
    public static void Convert(string parquet, string csv, CancellationToken cancel = default)
    {
        const int chunk = 1 << 16;
        using var file = new ParquetFileReader(parquet);
        var schema = file.FileMetaData.Schema;
        int columns = schema.NumColumns;
        using var output = new StreamWriter(csv, append: false, new UTF8Encoding(false), 1 << 20) { NewLine = "\n" };
        output.WriteLine(string.Join(',', Enumerable.Range(0, columns).Select(c => Field(schema.Column(c).Name))));
        var cells = new string[columns][];
        var line = new StringBuilder();
        for (int g = 0; g < file.FileMetaData.NumRowGroups; g++)
        {
            using var group = file.RowGroup(g);
            long rows = group.MetaData.NumRows;
            var readers = Enumerable.Range(0, columns).Select(c => group.Column(c).LogicalReader()).ToArray();
            try
            {
                for (long done = 0; done < rows; done += chunk)
                {
                    cancel.ThrowIfCancellationRequested();
                    int n = (int)Math.Min(chunk, rows - done);
                    for (int c = 0; c < columns; c++) cells[c] = readers[c].Apply(new Reader(n));
                    for (int r = 0; r < n; r++)
                    {
                        line.Clear();
                        for (int c = 0; c < columns; c++)
                        {
                            if (c > 0) line.Append(',');
                            line.Append(cells[c][r]);
                        }
                        output.WriteLine(line);
                    }
                }
            }
            finally
            {
                foreach (var reader in readers) reader.Dispose();
            }
        }
    }

    // Reads the next n values of a column of any type and formats each as a CSV field.
    private sealed class Reader(int n) : ILogicalColumnReaderVisitor<string[]>
    {
        public string[] OnLogicalColumnReader<TValue>(LogicalColumnReader<TValue> column)
        {
            var values = new TValue[n];
            int read = 0;
            while (read < n && column.HasNext) read += column.ReadBatch(values.AsSpan(read));
            // A column shorter than its row group would otherwise be padded with default values.
            if (read < n) throw new InvalidDataException($"column '{column.ColumnDescriptor.Name}' holds {read} of the row group's {n} values");
            var cells = new string[n];
            for (int k = 0; k < n; k++) cells[k] = Format(values[k]);
            return cells;
        }
    }

    /// <summary>One value as a CSV field: empty for null, round-trip doubles, invariant numbers, quoted text where needed.</summary>
    public static string Format(object? value) => value switch
    {
        null => "",
        double d => d.ToString("R", CultureInfo.InvariantCulture),
        float f => f.ToString("R", CultureInfo.InvariantCulture),
        bool b => b ? "true" : "false",
        string s => Field(s),
        IFormattable x => x.ToString(null, CultureInfo.InvariantCulture),
        _ => Field(value.ToString() ?? ""),
    };

    private static string Field(string s) =>
        s.AsSpan().IndexOfAny(",\"\r\n") >= 0 ? "\"" + s.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"" : s;
}

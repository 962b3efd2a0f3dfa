using ParquetSharp;
using System.Globalization;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>
/// A data file read into named columns, numeric or text, with a label for each row that error messages quote
/// ("line 7" for CSV, "row 7" for Parquet, counting data rows from 1).
/// </summary>
public sealed class DataTable
{
    private readonly Dictionary<string, double[]> _numbers = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string?[]> _texts = new(StringComparer.Ordinal);
    // Rows where a Parquet number column is null, for the columns that have any.
    private readonly Dictionary<string, bool[]> _nulls = new(StringComparer.Ordinal);

    private DataTable(string source, bool csv, int rows, IReadOnlyList<string> names)
    {
        Source = source;
        IsCsv = csv;
        RowCount = rows;
        ColumnNames = names;
    }

    /// <summary>The file name.</summary>
    public string Source { get; }

    /// <summary>True for CSV (row labels are file lines), false for Parquet.</summary>
    public bool IsCsv { get; }

    /// <summary>Number of data rows.</summary>
    public int RowCount { get; }

    /// <summary>Column names in file order.</summary>
    public IReadOnlyList<string> ColumnNames { get; }

    /// <summary>True when the file has the column.</summary>
    public bool Has(string column) => _numbers.ContainsKey(column) || _texts.ContainsKey(column);

    /// <summary>How messages name data row r (0-based): the CSV line of the file or the Parquet row (from 1).</summary>
    public string RowLabel(int r) => IsCsv ? $"line {_lines[r]}" : $"row {r + 1}";

    /// <summary>The column as finite numbers.</summary>
    /// <exception cref="InputException">A value is missing, not a number or not finite; the message names the row and column.</exception>
    public double[] Numbers(string column, string meaning)
    {
        if (_numbers.TryGetValue(column, out var values))
        {
            var nulls = _nulls.GetValueOrDefault(column);
            for (int r = 0; r < values.Length; r++)
                if (nulls is not null && nulls[r])
                    throw new InputException($"{Source} {RowLabel(r)}, column {Describe(column, meaning)}: value is missing (null)");
                else if (!double.IsFinite(values[r]))
                    throw new InputException($"{Source} {RowLabel(r)}, column {Describe(column, meaning)}: {Format(values[r])} is not a finite number");
            return values;
        }
        var text = _texts[column];
        var result = new double[text.Length];
        for (int r = 0; r < text.Length; r++)
        {
            string? s = text[r];
            if (string.IsNullOrWhiteSpace(s))
                throw new InputException($"{Source} {RowLabel(r)}, column {Describe(column, meaning)}: value is missing");
            if (!double.TryParse(s, NumberStyles.Float, CultureInfo.InvariantCulture, out double v))
                throw new InputException($"{Source} {RowLabel(r)}, column {Describe(column, meaning)}: '{s}' is not a number");
            if (!double.IsFinite(v))
                throw new InputException($"{Source} {RowLabel(r)}, column {Describe(column, meaning)}: '{s}' is not a finite number");
            result[r] = v;
        }
        _numbers[column] = result;
        return result;
    }

    /// <summary>True when row r of the column is empty (CSV) or null (Parquet): an optional value not given.</summary>
    public bool IsMissing(string column, int r) =>
        _nulls.GetValueOrDefault(column) is { } nulls ? nulls[r] : _texts.TryGetValue(column, out var t) && string.IsNullOrWhiteSpace(t[r]);

    /// <summary>The column as text (numbers formatted invariantly).</summary>
    public string?[] Texts(string column) =>
        _texts.TryGetValue(column, out var t) ? t : [.. _numbers[column].Select(v => v.ToString(CultureInfo.InvariantCulture))];

    /// <summary>"t_ms (delay_s)" when the file's column was mapped to an expected name, else the name.</summary>
    public static string Describe(string column, string meaning) => column == meaning ? column : $"{column} (as {meaning})";

    private static string Format(double v) => v.ToString(CultureInfo.InvariantCulture);

    /// <summary>Reads a CSV (comma-separated, header row) or Parquet file, chosen by its first bytes.</summary>
    /// <exception cref="InputException">The file is missing, empty or malformed.</exception>
    public static async Task<DataTable> LoadAsync(string path, CancellationToken cancel = default)
    {
        if (!File.Exists(path)) throw new InputException($"data file {path}: not found");
        string name = Path.GetFileName(path);
        bool parquet;
        await using (var probe = File.OpenRead(path))
        {
            var magic = new byte[4];
            int read = await probe.ReadAsync(magic, cancel);
            parquet = read == 4 && magic.SequenceEqual("PAR1"u8.ToArray());
        }
        return parquet ? await LoadParquetAsync(path, name, cancel) : LoadCsv(path, name);
    }

    private static DataTable LoadCsv(string path, string name)
    {
        using var reader = new StreamReader(path);
        int line = 0;
        string? header = null;
        for (string? text = reader.ReadLine(); text is not null; text = reader.ReadLine())
        {
            line++;
            if (text.Trim().Length == 0 || text.TrimStart().StartsWith('#')) continue;
            header = text;
            break;
        }
        if (header is null) throw new InputException($"{name}: the file is empty; expected a header row of column names");
        var names = Split(header).Select(c => c.Trim()).ToArray();
        var duplicate = names.GroupBy(n => n).FirstOrDefault(g => g.Count() > 1);
        if (duplicate is not null) throw new InputException($"{name} line {line}: column '{duplicate.Key}' appears twice in the header");
        var columns = names.Select(_ => new List<string?>()).ToArray();
        var lines = new List<int>();
        for (string? text = reader.ReadLine(); text is not null; text = reader.ReadLine())
        {
            line++;
            if (text.Trim().Length == 0 || text.TrimStart().StartsWith('#')) continue;
            var fields = Split(text);
            if (fields.Count != names.Length)
                throw new InputException($"{name} line {line}: {fields.Count} fields, but the header has {names.Length} columns ({string.Join(", ", names)})");
            for (int c = 0; c < names.Length; c++) columns[c].Add(fields[c].Trim());
            lines.Add(line);
        }
        if (lines.Count == 0) throw new InputException($"{name}: no data rows after the header");
        var table = new DataTable(name, csv: true, lines.Count, names) { _lines = [.. lines] };
        for (int c = 0; c < names.Length; c++) table._texts[names[c]] = [.. columns[c]];
        return table;
    }

    private int[] _lines = [];

    private static List<string> Split(string line)
    {
        // Most numeric files quote nothing: split directly.
        if (!line.Contains('"')) return [.. line.Split(',')];
        var fields = new List<string>();
        var current = new System.Text.StringBuilder();
        bool quoted = false;
        for (int i = 0; i < line.Length; i++)
        {
            char ch = line[i];
            if (quoted)
            {
                if (ch == '"' && i + 1 < line.Length && line[i + 1] == '"') { current.Append('"'); i++; }
                else if (ch == '"') quoted = false;
                else current.Append(ch);
            }
            else if (ch == '"') quoted = true;
            else if (ch == ',') { fields.Add(current.ToString()); current.Clear(); }
            else current.Append(ch);
        }
        fields.Add(current.ToString());
        return fields;
    }

    // Through ParquetSharp (Apache Arrow's C++ reader): it reads every encoding, compression and OPTIONAL column that
    // DuckDB, pandas, polars or Spark write. The project's own Parquet.Net reader needed definition levels spelled out
    // for OPTIONAL text and let corrupt footers escape as its own exception types.
    private static Task<DataTable> LoadParquetAsync(string path, string name, CancellationToken cancel) => Task.Run(() =>
    {
        try
        {
            using var file = new ParquetFileReader(path);
            var meta = file.FileMetaData;
            var schema = meta.Schema;
            int columns = schema.NumColumns;
            if (meta.NumRows > int.MaxValue)
                throw new InputException($"{name}: {meta.NumRows} rows; at most {int.MaxValue} rows are read (aggregate shots into variances per delay)");
            var names = new string[columns];
            for (int c = 0; c < columns; c++)
            {
                var column = schema.Column(c);
                string[] path = column.Path.ToDotVector();
                names[c] = string.Join('.', path);
                if (column.MaxRepetitionLevel > 0 || path.Length > 1)
                    throw new InputException($"{name}: column {names[c]} is nested (a list, map or struct); expected flat columns of numbers or text");
            }
            var duplicate = names.GroupBy(n => n).FirstOrDefault(g => g.Count() > 1);
            if (duplicate is not null) throw new InputException($"{name}: column '{duplicate.Key}' appears twice");
            int rows = (int)meta.NumRows;
            if (rows == 0) throw new InputException($"{name}: the file has no rows");
            var numbers = new double[columns][];
            var missing = new bool[columns][];
            var texts = new string?[columns][];
            int offset = 0;
            for (int g = 0; g < meta.NumRowGroups; g++)
            {
                cancel.ThrowIfCancellationRequested();
                using var group = file.RowGroup(g);
                int n = checked((int)group.MetaData.NumRows);
                if (offset + (long)n > rows) throw new InputException($"{name}: the row groups hold more rows than the footer declares ({meta.NumRows})");
                for (int c = 0; c < columns; c++)
                {
                    using var reader = group.Column(c).LogicalReader();
                    if (reader is LogicalColumnReader<string> text)
                    {
                        (texts[c] ??= new string?[rows]).AsSpan(offset, n).Clear();
                        ReadAll(text, texts[c].AsSpan(offset, n), name, names[c]);
                        continue;
                    }
                    numbers[c] ??= new double[rows];
                    missing[c] ??= new bool[rows];
                    var values = numbers[c].AsSpan(offset, n);
                    var nulls = missing[c].AsSpan(offset, n);
                    switch (reader)
                    {
                        case LogicalColumnReader<double> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<double?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<float> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<float?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<long> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<long?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<int> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<int?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<short> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<short?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<sbyte> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<sbyte?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<ulong> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<ulong?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<uint> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<uint?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<ushort> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<ushort?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<byte> r: ConvertRequired(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<byte?> r: ConvertOptional(r, values, nulls, v => v, name, names[c]); break;
                        case LogicalColumnReader<decimal> r: ConvertRequired(r, values, nulls, v => (double)v, name, names[c]); break;
                        case LogicalColumnReader<decimal?> r: ConvertOptional(r, values, nulls, v => (double)v, name, names[c]); break;
                        default:
                            throw new InputException($"{name}: column {names[c]} holds {Describe(reader.GetType())}; expected numbers (double, float, integer, decimal) or text");
                    }
                }
                offset += n;
            }
            if (offset != rows) throw new InputException($"{name}: the row groups hold {offset} rows, the footer declares {rows}");
            var table = new DataTable(name, csv: false, rows, names);
            for (int c = 0; c < columns; c++)
            {
                if (texts[c] is { } t) table._texts[names[c]] = t;
                else
                {
                    table._numbers[names[c]] = numbers[c];
                    if (missing[c].Contains(true)) table._nulls[names[c]] = missing[c];
                }
            }
            return table;
        }
        catch (Exception e) when (e is not InputException and not OperationCanceledException and not OutOfMemoryException)
        {
            // A truncated file, a broken footer or page, an unknown codec: the native reader's message says which.
            string reason = e.Message.Split('\n')[0].Trim();
            throw new InputException($"{name}: not a readable Parquet file ({(reason.Length > 300 ? reason[..300] + "..." : reason)})");
        }
    }, cancel);

    private static string Describe(Type readerType) =>
        readerType.IsGenericType ? (Nullable.GetUnderlyingType(readerType.GetGenericArguments()[0]) ?? readerType.GetGenericArguments()[0]).Name : readerType.Name;

    private static void ReadAll(LogicalColumnReader<string> reader, Span<string?> values, string file, string column)
    {
        int done = 0;
        while (done < values.Length)
        {
            int read = reader.ReadBatch(values[done..]!);
            if (read <= 0) throw new InputException($"{file}: column {column} ends after {done} of {values.Length} rows of its row group");
            done += read;
        }
    }

    private static void ConvertRequired<T>(LogicalColumnReader<T> reader, Span<double> values, Span<bool> nulls, Func<T, double> convert, string file, string column)
        where T : struct
    {
        var buffer = new T[Math.Min(values.Length, 65536)];
        int done = 0;
        while (done < values.Length)
        {
            int read = reader.ReadBatch(buffer.AsSpan(0, Math.Min(buffer.Length, values.Length - done)));
            if (read <= 0) throw new InputException($"{file}: column {column} ends after {done} of {values.Length} rows of its row group");
            for (int k = 0; k < read; k++) values[done + k] = convert(buffer[k]);
            done += read;
        }
    }

    private static void ConvertOptional<T>(LogicalColumnReader<T?> reader, Span<double> values, Span<bool> nulls, Func<T, double> convert, string file, string column)
        where T : struct
    {
        var buffer = new T?[Math.Min(values.Length, 65536)];
        int done = 0;
        while (done < values.Length)
        {
            int read = reader.ReadBatch(buffer.AsSpan(0, Math.Min(buffer.Length, values.Length - done)));
            if (read <= 0) throw new InputException($"{file}: column {column} ends after {done} of {values.Length} rows of its row group");
            for (int k = 0; k < read; k++)
            {
                if (buffer[k] is { } v) values[done + k] = convert(v);
                else
                {
                    values[done + k] = double.NaN;
                    nulls[done + k] = true;
                }
            }
            done += read;
        }
    }
}

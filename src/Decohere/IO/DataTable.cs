using Parquet;
using Parquet.Schema;
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
            for (int r = 0; r < values.Length; r++)
                if (!double.IsFinite(values[r]))
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

    /// <summary>The column as text (numbers formatted invariantly).</summary>
    public string?[] Texts(string column) =>
        _texts.TryGetValue(column, out var t) ? t : [.. _numbers[column].Select(v => v.ToString(CultureInfo.InvariantCulture))];

    /// <summary>"t_ms (delay_s)" when the file's column was mapped to an expected name, else the name.</summary>
    public static string Describe(string column, string meaning) => column == meaning ? column : $"{column} (as {meaning})";

    private static string Format(double v) => double.IsNaN(v) ? "NaN (or null)" : v.ToString(CultureInfo.InvariantCulture);

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

    private static async Task<DataTable> LoadParquetAsync(string path, string name, CancellationToken cancel)
    {
        try
        {
            await using var stream = File.OpenRead(path);
            await using var reader = await ParquetReader.CreateAsync(stream, cancellationToken: cancel);
            var fields = reader.Schema.GetDataFields();
            var numbers = fields.ToDictionary(f => f.Name, _ => new List<double>());
            var texts = fields.ToDictionary(f => f.Name, _ => new List<string?>());
            long rows = 0;
            for (int g = 0; g < reader.RowGroupCount; g++)
            {
                using var group = reader.OpenRowGroupReader(g);
                int n = checked((int)group.RowCount);
                rows += n;
                foreach (var f in fields)
                {
                    var t = Nullable.GetUnderlyingType(f.ClrType) ?? f.ClrType;
                    if (t == typeof(string))
                    {
                        var buffer = new string?[n];
                        await group.ReadAsync(f, buffer.AsMemory(), cancellationToken: cancel);
                        texts[f.Name].AddRange(buffer);
                    }
                    else if (t == typeof(ReadOnlyMemory<char>))
                    {
                        // Required (non-nullable) text columns, as this tool writes them, read as character memory.
                        var buffer = new ReadOnlyMemory<char>[n];
                        await group.ReadAsync<ReadOnlyMemory<char>>(f, buffer.AsMemory(), cancellationToken: cancel);
                        texts[f.Name].AddRange(buffer.Select(m => m.ToString()));
                    }
                    else if (t == typeof(double)) numbers[f.Name].AddRange(await Read<double>(group, f, n, cancel, v => v));
                    else if (t == typeof(float)) numbers[f.Name].AddRange(await Read<float>(group, f, n, cancel, v => v));
                    else if (t == typeof(long)) numbers[f.Name].AddRange(await Read<long>(group, f, n, cancel, v => v));
                    else if (t == typeof(int)) numbers[f.Name].AddRange(await Read<int>(group, f, n, cancel, v => v));
                    else if (t == typeof(short)) numbers[f.Name].AddRange(await Read<short>(group, f, n, cancel, v => v));
                    else throw new InputException($"{name}: column {f.Name} has type {t.Name}; expected numbers (double, float, int, long) or text");
                }
            }
            if (rows == 0) throw new InputException($"{name}: the file has no rows");
            var table = new DataTable(name, csv: false, checked((int)rows), [.. fields.Select(f => f.Name)]);
            foreach (var f in fields)
            {
                var t = Nullable.GetUnderlyingType(f.ClrType) ?? f.ClrType;
                if (t == typeof(string) || t == typeof(ReadOnlyMemory<char>)) table._texts[f.Name] = [.. texts[f.Name]];
                else table._numbers[f.Name] = [.. numbers[f.Name]];
            }
            return table;
        }
        catch (Exception e) when (e is IOException or ParquetException or InvalidDataException)
        {
            throw new InputException($"{name}: not a readable Parquet file ({e.Message})");
        }
    }

    private static async Task<IEnumerable<double>> Read<T>(ParquetRowGroupReader group, DataField f, int n, CancellationToken cancel, Func<T, double> convert)
        where T : struct
    {
        if (f.IsNullable)
        {
            var buffer = new T?[n];
            await group.ReadAsync<T>(f, buffer.AsMemory(), cancellationToken: cancel);
            return buffer.Select(v => v is { } x ? convert(x) : double.NaN);
        }
        var plain = new T[n];
        await group.ReadAsync<T>(f, plain.AsMemory(), cancellationToken: cancel);
        return plain.Select(convert);
    }
}

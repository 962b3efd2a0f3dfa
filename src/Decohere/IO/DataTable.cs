using Microsoft.Win32.SafeHandles;
using ParquetSharp;
using System.Globalization;
using System.Runtime.CompilerServices;
using Encoding = System.Text.Encoding;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>Which columns of a data file to read, and as what.</summary>
/// <param name="Numbers">Columns read as numbers.</param>
/// <param name="Texts">Columns read as text (each distinct value stored once).</param>
public sealed record ColumnSelection(IReadOnlyCollection<string> Numbers, IReadOnlyCollection<string> Texts);

/// <summary>
/// Chooses the columns to read once the file's column names and its number of data rows are known, before any value is
/// read; it may refuse the file (an <see cref="InputException"/>), e.g. when the columns it needs would not fit the
/// memory limit.
/// </summary>
public delegate ColumnSelection ColumnSelector(IReadOnlyList<string> names, long rows);

/// <summary>
/// A data file read into named columns, numeric or text, with a label for each row that error messages quote
/// ("line 7" for CSV, "row 7" for Parquet, counting data rows from 1). Only the selected columns are read, straight into
/// arrays of numbers (CSV fields are parsed from spans of the line, never made into strings; a text column stores a code
/// per row and each distinct value once), so a file costs 8 bytes a row for each number column used.
/// </summary>
public sealed class DataTable
{
    private readonly Dictionary<string, NumberColumn> _numbers = new(StringComparer.Ordinal);
    private readonly Dictionary<string, TextColumn> _texts = new(StringComparer.Ordinal);
    private readonly HashSet<string> _names;
    // CSV: the data rows where the file line does not follow from the row before (blank or comment lines between them).
    private readonly List<(int Row, int Line)> _breaks = [];

    private DataTable(string source, bool csv, int rows, IReadOnlyList<string> names)
    {
        Source = source;
        IsCsv = csv;
        RowCount = rows;
        ColumnNames = names;
        _names = [.. names];
    }

    /// <summary>The file name.</summary>
    public string Source { get; }

    /// <summary>True for CSV (row labels are file lines), false for Parquet.</summary>
    public bool IsCsv { get; }

    /// <summary>Number of data rows.</summary>
    public int RowCount { get; }

    /// <summary>Column names in file order (read or not).</summary>
    public IReadOnlyList<string> ColumnNames { get; }

    /// <summary>True when the file has the column.</summary>
    public bool Has(string column) => _names.Contains(column);

    /// <summary>How messages name data row r (0-based): the CSV line of the file or the Parquet row (from 1).</summary>
    public string RowLabel(int r)
    {
        if (!IsCsv) return $"row {r + 1}";
        int lo = 0, hi = _breaks.Count - 1;
        while (lo < hi)
        {
            int mid = (lo + hi + 1) / 2;
            if (_breaks[mid].Row <= r) lo = mid; else hi = mid - 1;
        }
        return $"line {_breaks[lo].Line + (r - _breaks[lo].Row)}";
    }

    /// <summary>The column as finite numbers (the table's own array: do not modify).</summary>
    /// <exception cref="InputException">A value is missing, not a number or not finite; the message names the first such row and the column.</exception>
    /// <exception cref="InvalidOperationException">The column was not selected.</exception>
    public double[] Numbers(string column, string meaning)
    {
        if (!_numbers.TryGetValue(column, out var values))
        {
            var text = _texts.GetValueOrDefault(column) ?? throw new InvalidOperationException($"column {column} was not read");
            _numbers[column] = values = text.ToNumbers(RowCount);
        }
        if (values.ProblemRow >= 0)
            throw new InputException($"{Source} {RowLabel(values.ProblemRow)}, column {Describe(column, meaning)}: {values.Problem}");
        return values.Values;
    }

    /// <summary>True when row r of the column is empty (CSV) or null (Parquet): an optional value not given.</summary>
    public bool IsMissing(string column, int r) =>
        _numbers.TryGetValue(column, out var numbers) ? numbers.IsMissing(r)
        : _texts.TryGetValue(column, out var text) && string.IsNullOrWhiteSpace(text.Values[text.Codes[r]]);

    /// <summary>The column as text (numbers formatted invariantly).</summary>
    /// <exception cref="InvalidOperationException">The column was not selected.</exception>
    public string?[] Texts(string column)
    {
        var (codes, values) = Categories(column);
        var result = new string?[codes.Length];
        for (int r = 0; r < codes.Length; r++) result[r] = values[codes[r]];
        return result;
    }

    /// <summary>The column as a code per row and the distinct values, in order of first appearance.</summary>
    /// <exception cref="InvalidOperationException">The column was not selected.</exception>
    public (int[] Codes, IReadOnlyList<string?> Values) Categories(string column)
    {
        if (!_texts.TryGetValue(column, out var text))
        {
            var numbers = _numbers.GetValueOrDefault(column) ?? throw new InvalidOperationException($"column {column} was not read");
            text = new TextColumn(RowCount);
            for (int r = 0; r < RowCount; r++) text.Codes[r] = text.Code(Format(numbers.Values[r]));
            _texts[column] = text;
        }
        return (text.Codes, text.Values);
    }

    /// <summary>"t_ms (delay_s)" when the file's column was mapped to an expected name, else the name.</summary>
    public static string Describe(string column, string meaning) => column == meaning ? column : $"{column} (as {meaning})";

    private static string Format(double v) => v.ToString(CultureInfo.InvariantCulture);

    /// <summary>Reads every column of a CSV (as numbers) or Parquet file (in its own type).</summary>
    /// <exception cref="InputException">The file is missing, empty or malformed.</exception>
    public static Task<DataTable> LoadAsync(string path, CancellationToken cancel = default) => LoadAsync(path, null, cancel);

    /// <summary>
    /// Reads a CSV (comma-separated, header row), Parquet or HDF5 file (<c>FILE.h5:/group</c> for a group's datasets, see
    /// <see cref="Hdf5Columns"/>), chosen by its first bytes: only the columns <paramref name="select"/> chooses (null: all).
    /// </summary>
    /// <exception cref="InputException">The file is missing, empty or malformed, or <paramref name="select"/> refused it.</exception>
    public static async Task<DataTable> LoadAsync(string path, ColumnSelector? select, CancellationToken cancel = default)
    {
        var (file, group) = Hdf5Columns.SplitGroup(path);
        if (!File.Exists(file)) throw new InputException($"data file {path}: not found");
        if (Hdf5Columns.IsHdf5(file)) return await Task.Run(() => LoadHdf5(file, group, select, cancel), cancel);
        string name = Path.GetFileName(path);
        bool parquet;
        await using (var probe = File.OpenRead(path))
        {
            var magic = new byte[4];
            int read = await probe.ReadAsync(magic, cancel);
            parquet = read == 4 && magic.SequenceEqual("PAR1"u8.ToArray());
        }
        return parquet ? await LoadParquetAsync(path, name, select, cancel) : await Task.Run(() => LoadCsv(path, name, select, cancel), cancel);
    }

    private static DataTable LoadHdf5(string path, string group, ColumnSelector? select, CancellationToken cancel)
    {
        var selection = new ColumnSelection([], []);
        var h5 = Hdf5Columns.Read(path, group, (names, rows) =>
        {
            selection = Select(select, names, rows);
            return [.. selection.Numbers, .. selection.Texts];
        }, cancel);
        var table = new DataTable(h5.Source, csv: false, h5.Rows, h5.Names);
        foreach (var (name, values) in h5.Numbers)
        {
            var column = new NumberColumn(h5.Rows);
            values.CopyTo(column.Values, 0);
            for (int r = 0; r < values.Length; r++)
                if (!double.IsFinite(values[r])) column.Refuse(r, $"{Format(values[r])} is not a finite number");
            table._numbers[name] = column;
        }
        foreach (var (name, values) in h5.Texts)
        {
            var column = new TextColumn(h5.Rows);
            for (int r = 0; r < values.Length; r++) column.Codes[r] = column.Code(values[r]);
            table._texts[name] = column;
        }
        return table;
    }

    // Without a selector every column is read: as numbers from CSV, in its own type from Parquet.
    private static ColumnSelection Select(ColumnSelector? select, IReadOnlyList<string> names, long rows) =>
        select?.Invoke(names, rows) ?? new ColumnSelection(names, []);

    // Files below this size are parsed on one thread: a second part would cost more to start than it saves.
    private const long ParallelBytes = 1 << 20;

    // Two passes over the bytes: the first counts the data rows (no field is parsed), so each selected column is allocated
    // once at its final size, and marks line starts that cut the file into parts of about equal size; the second parses
    // the parts in parallel, each into its own rows of the columns, and joins what they found in file order.
    private static DataTable LoadCsv(string path, string name, ColumnSelector? select, CancellationToken cancel)
    {
        using var source = CsvBytes.Open(path);
        int partCount = source.Length >= ParallelBytes ? Math.Clamp(Environment.ProcessorCount, 1, 8) : 1;
        var cuts = new List<(long Offset, long Row, int Line)>();
        string[] names;
        long rows = 0;
        {
            var lines = new ByteLines(source, source.Start, source.Length, name, 0);
            ReadOnlySpan<byte> text = default;
            while (lines.Next(out text) && !IsData(text)) { }
            if (!IsData(text)) throw new InputException($"{name}: the file is empty; expected a header row of column names");
            names = [.. Split(Encoding.UTF8.GetString(text)).Select(c => c.Trim())];
            var duplicate = names.GroupBy(n => n).FirstOrDefault(g => g.Count() > 1);
            if (duplicate is not null) throw new InputException($"{name} line {lines.Line}: column '{duplicate.Key}' appears twice in the header");
            cuts.Add((lines.Position, 0, lines.Line));
            while (true)
            {
                if (cuts.Count < partCount && lines.Position >= source.Length * cuts.Count / partCount) cuts.Add((lines.Position, rows, lines.Line));
                if (!lines.Next(out text)) break;
                if (IsData(text)) rows++;
                if ((lines.Line & 0xFFFF) == 0) cancel.ThrowIfCancellationRequested();
            }
            cuts.Add((source.Length, rows, 0));
        }
        if (rows == 0) throw new InputException($"{name}: no data rows after the header");
        if (rows > int.MaxValue) throw new InputException($"{name}: {rows} data rows; at most {int.MaxValue} rows are read (aggregate shots into variances per delay)");
        var selection = Select(select, names, rows);
        var table = new DataTable(name, csv: true, (int)rows, names);
        var numbers = new NumberColumn?[names.Length];
        var texts = new TextColumn?[names.Length];
        for (int c = 0; c < names.Length; c++)
        {
            if (selection.Numbers.Contains(names[c])) table._numbers[names[c]] = numbers[c] = new NumberColumn((int)rows);
            else if (selection.Texts.Contains(names[c])) table._texts[names[c]] = texts[c] = new TextColumn((int)rows);
        }
        // Part 0 fills the table's own columns; the others keep their problems, breaks and text values apart until joined.
        var parts = new CsvPart[cuts.Count - 1];
        for (int k = 0; k < parts.Length; k++)
            parts[k] = k == 0 ? new CsvPart(numbers, texts, table._breaks)
                : new CsvPart([.. numbers.Select(n => n?.Part())], [.. texts.Select(t => t?.Part())], []);
        var failures = new Exception?[parts.Length];
        System.Threading.Tasks.Parallel.For(0, parts.Length, k =>
        {
            try { ParsePart(source, name, names, cuts[k], cuts[k + 1], parts[k], cancel); }
            catch (Exception e) { failures[k] = e; }
        });
        cancel.ThrowIfCancellationRequested();
        // The first failure in file order, as one reader going through the file would have met it.
        if (failures.FirstOrDefault(e => e is not null) is { } failure) System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(failure);
        for (int k = 1; k < parts.Length; k++)
        {
            table._breaks.AddRange(parts[k].Breaks);
            for (int c = 0; c < names.Length; c++)
            {
                numbers[c]?.Absorb(parts[k].Numbers[c]!);
                texts[c]?.Absorb(parts[k].Texts[c]!, (int)cuts[k].Row, (int)cuts[k + 1].Row);
            }
        }
        return table;
    }

    /// <summary>The columns one part of a CSV writes into (sharing the table's arrays) and the line breaks it met.</summary>
    private sealed record CsvPart(NumberColumn?[] Numbers, TextColumn?[] Texts, List<(int Row, int Line)> Breaks);

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private static void ParsePart(CsvBytes source, string name, string[] names, (long Offset, long Row, int Line) from, (long Offset, long Row, int Line) to,
        CsvPart part, CancellationToken cancel)
    {
        var (numbers, texts, breaks) = part;
        int columns = names.Length;
        var lines = new ByteLines(source, from.Offset, to.Offset, name, from.Line);
        int r = (int)from.Row, end = (int)to.Row, previous = from.Line;
        while (lines.Next(out var text))
        {
            if (!IsData(text)) continue;
            if (r == end) throw new InputException($"{name}: the file changed while it was read");
            if (lines.Line != previous + 1 || r == from.Row) breaks.Add((r, lines.Line));
            previous = lines.Line;
            if ((r & 0xFFFF) == 0) cancel.ThrowIfCancellationRequested();
            if (text.Contains((byte)'"'))
            {
                // Quoted fields (rare in numeric files) go through the general splitter.
                var fields = Split(Encoding.UTF8.GetString(text));
                if (fields.Count != columns) throw FieldCount(name, lines.Line, fields.Count, names);
                for (int c = 0; c < columns; c++) Store(numbers[c], texts[c], fields[c].AsSpan().Trim(), r);
            }
            else
            {
                var rest = text;
                for (int c = 0; c < columns; c++)
                {
                    int comma = rest.IndexOf((byte)',');
                    if ((comma < 0) != (c == columns - 1)) throw FieldCount(name, lines.Line, text.Count((byte)',') + 1, names);
                    Store(numbers[c], texts[c], comma < 0 ? rest : rest[..comma], r);
                    if (comma >= 0) rest = rest[(comma + 1)..];
                }
            }
            r++;
        }
        if (r != end) throw new InputException($"{name}: the file changed while it was read");
    }

    // char.IsWhiteSpace on the ASCII range, so trimming bytes trims what trimming the decoded text would.
    private static readonly bool[] AsciiWhite = [.. Enumerable.Range(0, 128).Select(c => char.IsWhiteSpace((char)c))];

    private static bool IsData(ReadOnlySpan<char> line)
    {
        var t = line.TrimStart();
        return t.Length > 0 && t[0] != '#';
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private static bool IsData(ReadOnlySpan<byte> line)
    {
        int i = 0;
        while (i < line.Length && line[i] < 128 && AsciiWhite[line[i]]) i++;
        if (i == line.Length) return false;
        // A line that starts with a non-ASCII character may start with Unicode white space.
        return line[i] < 128 ? line[i] != '#' : IsData(Encoding.UTF8.GetString(line[i..]).AsSpan());
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private static ReadOnlySpan<byte> TrimAscii(ReadOnlySpan<byte> field)
    {
        int a = 0, b = field.Length;
        while (a < b && field[a] < 128 && AsciiWhite[field[a]]) a++;
        while (b > a && field[b - 1] < 128 && AsciiWhite[field[b - 1]]) b--;
        return field[a..b];
    }

    // Plain decimal numbers parse straight from the bytes; anything else is decoded and read as before, so the values and
    // the messages are those of double.TryParse on the trimmed text.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private static void Store(NumberColumn? number, TextColumn? text, ReadOnlySpan<byte> field, int r)
    {
        if (number is null && text is null) return;
        if (number is not null && DecimalText.TryParse(TrimAscii(field), out double v))
        {
            number.Values[r] = v;
            return;
        }
        if (text is not null && text.Repeats(field, r)) return;
        Span<char> chars = field.Length <= 256 ? stackalloc char[256] : new char[field.Length];
        int count = Encoding.UTF8.GetChars(field, chars);
        Store(number, text, chars[..count].Trim(), r);
        text?.Remember(field, r);
    }

    private static InputException FieldCount(string name, int line, int fields, string[] names) =>
        new($"{name} line {line}: {fields} fields, but the header has {names.Length} columns ({string.Join(", ", names)})");

    private static void Store(NumberColumn? number, TextColumn? text, ReadOnlySpan<char> field, int r)
    {
        if (number is not null)
        {
            if (field.IsEmpty) number.RefuseMissing(r, "value is missing");
            else if (!double.TryParse(field, NumberStyles.Float, CultureInfo.InvariantCulture, out double v)) number.Refuse(r, $"'{field}' is not a number");
            else if (!double.IsFinite(v)) number.Refuse(r, $"'{field}' is not a finite number");
            else number.Values[r] = v;
        }
        else if (text is not null) text.Codes[r] = text.Code(field);
    }

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

    /// <summary>
    /// The bytes of a CSV as UTF-8, read at explicit offsets so that several readers can share one file. A UTF-8 byte order
    /// mark is skipped; a file with a UTF-16 or UTF-32 one is decoded as StreamReader would and held as UTF-8 in memory.
    /// </summary>
    private sealed class CsvBytes : IDisposable
    {
        private readonly SafeFileHandle? _file;
        private readonly byte[]? _memory;

        private CsvBytes(SafeFileHandle? file, byte[]? memory, long start, long length) => (_file, _memory, Start, Length) = (file, memory, start, length);

        /// <summary>Offset of the first character.</summary>
        public long Start { get; }

        /// <summary>Length in bytes.</summary>
        public long Length { get; }

        public static CsvBytes Open(string path)
        {
            var file = File.OpenHandle(path);
            Span<byte> head = stackalloc byte[4];
            head = head[..RandomAccess.Read(file, head, 0)];
            if (head.StartsWith((ReadOnlySpan<byte>)[0xEF, 0xBB, 0xBF])) return new(file, null, 3, RandomAccess.GetLength(file));
            if (!head.StartsWith((ReadOnlySpan<byte>)[0xFE, 0xFF]) && !head.StartsWith((ReadOnlySpan<byte>)[0xFF, 0xFE]) && !head.SequenceEqual((ReadOnlySpan<byte>)[0, 0, 0xFE, 0xFF]))
                return new(file, null, 0, RandomAccess.GetLength(file));
            file.Dispose();
            var bytes = Encoding.UTF8.GetBytes(File.ReadAllText(path));
            return new(null, bytes, 0, bytes.Length);
        }

        /// <summary>Fills <paramref name="buffer"/> from <paramref name="offset"/>; the count read, 0 at the end.</summary>
        public int Read(Span<byte> buffer, long offset)
        {
            if (_file is not null) return RandomAccess.Read(_file, buffer, offset);
            int count = (int)Math.Clamp(_memory!.Length - offset, 0, buffer.Length);
            _memory.AsSpan((int)offset, count).CopyTo(buffer);
            return count;
        }

        public void Dispose() => _file?.Dispose();
    }

    /// <summary>
    /// The lines between two offsets of a <see cref="CsvBytes"/> as spans of one reused buffer (CR, LF or CR LF end a line,
    /// as in <see cref="TextReader.ReadLine"/>); <paramref name="line"/> is the number of the line before the first.
    /// </summary>
    private sealed class ByteLines(CsvBytes source, long from, long to, string name, int line)
    {
        // A data row holds a few numbers; a longer line is damage, not data, and must not take the memory.
        private const int MaxLine = 1 << 20;
        private byte[] _buffer = new byte[1 << 16];
        private int _start, _end;
        private long _next = from;
        private bool _eof;

        /// <summary>The 1-based number of the line returned last.</summary>
        public int Line { get; private set; } = line;

        /// <summary>The offset where the next line starts.</summary>
        public long Position => _next - (_end - _start);

        /// <summary>The next line, valid until the next call; false at the end of the range.</summary>
        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        public bool Next(out ReadOnlySpan<byte> line)
        {
            while (true)
            {
                var span = _buffer.AsSpan(_start, _end - _start);
                int i = span.IndexOfAny((byte)'\n', (byte)'\r');
                if (i >= 0 && (span[i] == '\n' || i + 1 < span.Length || _eof))
                {
                    line = span[..i];
                    _start += i + (span[i] == '\r' && i + 1 < span.Length && span[i + 1] == '\n' ? 2 : 1);
                    Line++;
                    return true;
                }
                if (_eof)
                {
                    line = span;
                    _start = _end;
                    if (span.IsEmpty) return false;
                    Line++;
                    return true;
                }
                if (_start > 0)
                {
                    span.CopyTo(_buffer);
                    (_start, _end) = (0, span.Length);
                }
                if (_end == _buffer.Length)
                {
                    if (_buffer.Length >= MaxLine) throw new InputException($"{name} line {Line + 1}: longer than {MaxLine} characters; a data row holds a few numbers");
                    Array.Resize(ref _buffer, 2 * _buffer.Length);
                }
                int read = source.Read(_buffer.AsSpan(_end, (int)Math.Min(_buffer.Length - _end, to - _next)), _next);
                if (read == 0) _eof = true;
                else (_end, _next) = (_end + read, _next + read);
            }
        }
    }

    /// <summary>A number column and the first row that holds no finite number (refused when the column is used).</summary>
    private sealed class NumberColumn(double[] values)
    {
        public NumberColumn(int rows) : this(new double[rows]) { }

        public double[] Values { get; } = values;
        public int ProblemRow { get; private set; } = -1;
        public string? Problem { get; private set; }

        private HashSet<int>? _missing;

        /// <summary>A column over the same values with problems of its own, for a part of the rows read in parallel.</summary>
        public NumberColumn Part() => new(Values);

        /// <summary>Takes over the problems of a part.</summary>
        public void Absorb(NumberColumn part)
        {
            if (part.ProblemRow >= 0 && (ProblemRow < 0 || part.ProblemRow < ProblemRow)) (ProblemRow, Problem) = (part.ProblemRow, part.Problem);
            if (part._missing is not null) (_missing ??= []).UnionWith(part._missing);
        }

        public bool IsMissing(int row) => _missing?.Contains(row) == true;

        public void RefuseMissing(int row, string problem)
        {
            (_missing ??= []).Add(row);
            Refuse(row, problem);
        }

        public void Refuse(int row, string problem)
        {
            Values[row] = double.NaN;
            if (ProblemRow >= 0 && ProblemRow <= row) return;
            (ProblemRow, Problem) = (row, problem);
        }
    }

    /// <summary>A text column: a code per row and each distinct value once (null for a Parquet null).</summary>
    private sealed class TextColumn(int[] codes)
    {
        private readonly Dictionary<string, int> _codes = new(StringComparer.Ordinal);
        private int _null = -1;
        // The raw bytes of the last CSV field coded, and its code: a column like `mode` repeats its value row after row.
        private byte[] _last = [];
        private int _lastLength = -1, _lastCode;

        public TextColumn(int rows) : this(new int[rows]) { }

        public int[] Codes { get; } = codes;
        public List<string?> Values { get; } = [];

        /// <summary>A column over the same codes with values of its own, for a part of the rows read in parallel.</summary>
        public TextColumn Part() => new(Codes);

        /// <summary>Takes over the values of a part that coded rows [from, to), in their order of first appearance.</summary>
        public void Absorb(TextColumn part, int from, int to)
        {
            var map = part.Values.Select(Code).ToArray();
            for (int r = from; r < to; r++) Codes[r] = map[Codes[r]];
        }

        /// <summary>True (and row r coded) when the field's bytes are those of the last field remembered.</summary>
        public bool Repeats(ReadOnlySpan<byte> field, int r)
        {
            if (field.Length != _lastLength || !field.SequenceEqual(_last.AsSpan(0, _lastLength))) return false;
            Codes[r] = _lastCode;
            return true;
        }

        /// <summary>Remembers the bytes of the field that gave row r its code.</summary>
        public void Remember(ReadOnlySpan<byte> field, int r)
        {
            if (_last.Length < field.Length) _last = new byte[Math.Max(field.Length, 2 * _last.Length)];
            field.CopyTo(_last);
            (_lastLength, _lastCode) = (field.Length, Codes[r]);
        }

        public int Code(ReadOnlySpan<char> value)
        {
            var lookup = _codes.GetAlternateLookup<ReadOnlySpan<char>>();
            if (lookup.TryGetValue(value, out int code)) return code;
            return Add(value.ToString());
        }

        public int Code(string? value)
        {
            if (value is null) return _null >= 0 ? _null : _null = Add(null);
            return _codes.TryGetValue(value, out int code) ? code : Add(value);
        }

        private int Add(string? value)
        {
            Values.Add(value);
            if (value is not null) _codes[value] = Values.Count - 1;
            return Values.Count - 1;
        }

        /// <summary>Parses each distinct value once.</summary>
        public NumberColumn ToNumbers(int rows)
        {
            var parsed = new (double Value, string? Problem)[Values.Count];
            for (int k = 0; k < Values.Count; k++)
            {
                string? s = Values[k];
                parsed[k] = string.IsNullOrWhiteSpace(s) ? (double.NaN, "value is missing")
                    : !double.TryParse(s, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) ? (double.NaN, $"'{s}' is not a number")
                    : !double.IsFinite(v) ? (double.NaN, $"'{s}' is not a finite number") : (v, null);
            }
            var column = new NumberColumn(rows);
            for (int r = 0; r < rows; r++)
            {
                var (v, problem) = parsed[Codes[r]];
                if (problem is null) column.Values[r] = v;
                else column.Refuse(r, problem);
            }
            return column;
        }
    }

    // Through ParquetSharp (Apache Arrow's C++ reader): it reads every encoding, compression and OPTIONAL column that
    // DuckDB, pandas, polars or Spark write. Only the selected columns' chunks are read, row group by row group.
    private static Task<DataTable> LoadParquetAsync(string path, string name, ColumnSelector? select, CancellationToken cancel) => Task.Run(() =>
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
            var selection = Select(select, names, rows);
            var wanted = Enumerable.Range(0, columns).Where(c => selection.Numbers.Contains(names[c]) || selection.Texts.Contains(names[c])).ToArray();
            var numbers = new NumberColumn?[columns];
            var texts = new TextColumn?[columns];
            int offset = 0;
            for (int g = 0; g < meta.NumRowGroups; g++)
            {
                cancel.ThrowIfCancellationRequested();
                using var group = file.RowGroup(g);
                int n = checked((int)group.MetaData.NumRows);
                if (offset + (long)n > rows) throw new InputException($"{name}: the row groups hold more rows than the footer declares ({meta.NumRows})");
                foreach (int c in wanted)
                {
                    using var reader = group.Column(c).LogicalReader();
                    if (reader is LogicalColumnReader<string> text)
                    {
                        ReadAll(text, texts[c] ??= new TextColumn(rows), offset, n, name, names[c]);
                        continue;
                    }
                    var values = numbers[c] ??= new NumberColumn(rows);
                    switch (reader)
                    {
                        case LogicalColumnReader<double> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<double?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<float> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<float?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<long> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<long?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<int> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<int?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<short> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<short?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<sbyte> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<sbyte?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<ulong> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<ulong?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<uint> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<uint?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<ushort> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<ushort?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<byte> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<byte?> r: ReadNumbers(r, values, offset, n, v => v, name, names[c]); break;
                        case LogicalColumnReader<decimal> r: ReadNumbers(r, values, offset, n, v => (double)v, name, names[c]); break;
                        case LogicalColumnReader<decimal?> r: ReadNumbers(r, values, offset, n, v => (double?)v, name, names[c]); break;
                        default:
                            throw new InputException($"{name}: column {names[c]} holds {Describe(reader.GetType())}; expected numbers (double, float, integer, decimal) or text");
                    }
                }
                offset += n;
            }
            if (offset != rows) throw new InputException($"{name}: the row groups hold {offset} rows, the footer declares {rows}");
            var table = new DataTable(name, csv: false, rows, names);
            foreach (int c in wanted)
            {
                if (texts[c] is { } t) table._texts[names[c]] = t;
                else if (numbers[c] is { } v) table._numbers[names[c]] = v;
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

    private const int Batch = 65536;

    private static void ReadAll(LogicalColumnReader<string> reader, TextColumn column, int offset, int count, string file, string name)
    {
        var buffer = new string?[Math.Min(count, Batch)];
        int done = 0;
        while (done < count)
        {
            int read = reader.ReadBatch(buffer.AsSpan(0, Math.Min(buffer.Length, count - done))!);
            if (read <= 0) throw new InputException($"{file}: column {name} ends after {done} of {count} rows of its row group");
            for (int k = 0; k < read; k++) column.Codes[offset + done + k] = column.Code(buffer[k]);
            done += read;
        }
    }

    // One loop for required and OPTIONAL columns: a required column's values convert to a double? that is never null.
    private static void ReadNumbers<T>(LogicalColumnReader<T> reader, NumberColumn column, int offset, int count, Func<T, double?> convert, string file, string name)
    {
        var buffer = new T[Math.Min(count, Batch)];
        int done = 0;
        while (done < count)
        {
            int read = reader.ReadBatch(buffer.AsSpan(0, Math.Min(buffer.Length, count - done)));
            if (read <= 0) throw new InputException($"{file}: column {name} ends after {done} of {count} rows of its row group");
            for (int k = 0; k < read; k++)
            {
                if (convert(buffer[k]) is { } v) Put(column, offset + done + k, v);
                else column.RefuseMissing(offset + done + k, "value is missing (null)");
            }
            done += read;
        }
    }

    private static void Put(NumberColumn column, int row, double value)
    {
        if (double.IsFinite(value)) column.Values[row] = value;
        else column.Refuse(row, $"{Format(value)} is not a finite number");
    }
}

using ParquetSharp;
using ParquetSharp.Schema;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>
/// A column of a table to write: name (with its unit, e.g. time_s) and CLR element type. <see cref="Dictionary"/> stores
/// the column as a dictionary of its distinct values (on by default for text; for numbers that repeat, such as a delay
/// constant over a row group); <see cref="Delta"/> stores an int64 column as differences (a counter costs a few bits per row);
/// <see cref="Split"/> stores float64 values byte plane by byte plane. A text column with <see cref="Categories"/> may be
/// given as int[] indices into them (no per-row text encoding).
/// </summary>
public sealed record ColumnSpec(string Name, Type Type)
{
    /// <summary>The values a text column takes, for rows given as indices into this list.</summary>
    public IReadOnlyList<string>? Categories { get; init; }

    /// <summary>Dictionary encoding (falls back to plain when the distinct values pass 1 MiB per row group).</summary>
    public bool Dictionary { get; init; } = Type == typeof(string);

    /// <summary>DELTA_BINARY_PACKED encoding (int64 columns only).</summary>
    public bool Delta { get; init; }

    /// <summary>
    /// BYTE_STREAM_SPLIT encoding (float64 columns only): the k-th bytes of all values together, so the slowly varying sign,
    /// exponent and leading mantissa bytes of a smooth series sit side by side for the compressor.
    /// </summary>
    public bool Split { get; init; }

    /// <summary>Minimum and maximum per row group and page in the footer (on by default; readers skip data with them).</summary>
    public bool Statistics { get; init; } = true;

    /// <summary>A float64 column.</summary>
    public static ColumnSpec Double(string name) => new(name, typeof(double));
    /// <summary>A nullable float64 column (null where a value does not exist; NaN and ±∞ are written as null).</summary>
    public static ColumnSpec NullableDouble(string name) => new(name, typeof(double?));
    /// <summary>An int64 column.</summary>
    public static ColumnSpec Long(string name) => new(name, typeof(long));
    /// <summary>An int32 column.</summary>
    public static ColumnSpec Int(string name) => new(name, typeof(int));
    /// <summary>A UTF-8 string column.</summary>
    public static ColumnSpec String(string name) => new(name, typeof(string));
    /// <summary>A boolean column.</summary>
    public static ColumnSpec Bool(string name) => new(name, typeof(bool));
}

/// <summary>Compression of every column of a table.</summary>
public enum ParquetCompression
{
    /// <summary>None: for data that does not compress (random doubles), written at the speed of a copy.</summary>
    None,
    /// <summary>Snappy.</summary>
    Snappy,
    /// <summary>Zstandard at level 1 (smallest files among the fast codecs).</summary>
    Zstd,
}

/// <summary>
/// A Parquet file written in row groups (so tables larger than memory stream through) and committed atomically, through
/// ParquetSharp's column writers (Apache Arrow's C++ Parquet implementation): columns go down as spans, without a
/// per-value conversion. Disposing without <see cref="CommitAsync"/> deletes the partial file. Files are deterministic:
/// the same rows and metadata give the same bytes (no timestamps; the writer's name is the tool's version).
/// </summary>
public sealed class ParquetTable : IAsyncDisposable
{
    private readonly AtomicFile _file;
    private readonly ParquetFileWriter _writer;
    private readonly ColumnSpec[] _columns;
    private bool _closed;
    // Reused between row groups: definition levels, the non-null values of an OPTIONAL column, a constant column's
    // repeated value, and UTF-8 text with the byte-array descriptors pointing into it.
    private short[] _levels = [];
    private double[] _values = [], _defined = [];
    private double?[] _nullables = [];
    private int[] _ends = [];
    private long[] _longs = [];
    private int[] _ints = [];
    private bool[] _bools = [];
    private byte[] _text = [];
    private ByteArray[] _strings = [];

    // Per text column with categories: their UTF-8 bytes, in one array that the garbage collector never moves.
    private readonly ByteArray[]?[] _categories;
    private readonly byte[][] _categoryBytes;

    private ParquetTable(AtomicFile file, ParquetFileWriter writer, ColumnSpec[] columns)
    {
        _file = file;
        _writer = writer;
        _columns = columns;
        _categories = new ByteArray[]?[columns.Length];
        _categoryBytes = new byte[columns.Length][];
        for (int c = 0; c < columns.Length; c++)
        {
            if (columns[c].Categories is not { } values) continue;
            var bytes = _categoryBytes[c] = GC.AllocateArray<byte>(values.Sum(v => System.Text.Encoding.UTF8.GetByteCount(v)) + 1, pinned: true);
            var arrays = _categories[c] = new ByteArray[values.Count];
            unsafe
            {
                byte* start = (byte*)System.Runtime.CompilerServices.Unsafe.AsPointer(ref bytes[0]);
                for (int k = 0, at = 0; k < values.Count; k++)
                {
                    int length = System.Text.Encoding.UTF8.GetBytes(values[k], bytes.AsSpan(at));
                    arrays[k] = new ByteArray((IntPtr)(start + at), length);
                    at += length;
                }
            }
        }
    }

    /// <summary>Total rows written so far.</summary>
    public long RowCount { get; private set; }

    /// <summary>Opens a table for writing with key-value metadata stored in the file footer.</summary>
    /// <param name="path">Final file name (written to a temporary name until committed).</param>
    /// <param name="columns">The schema.</param>
    /// <param name="metadata">Footer key-value metadata.</param>
    /// <param name="cancel">Cancels the opening.</param>
    /// <param name="compression">Compression of every column (Zstandard by default: small tables of doubles shrink by a quarter or more).</param>
    public static Task<ParquetTable> CreateAsync(string path, IReadOnlyList<ColumnSpec> columns,
        IReadOnlyDictionary<string, string> metadata, CancellationToken cancel = default,
        ParquetCompression compression = ParquetCompression.Zstd)
    {
        cancel.ThrowIfCancellationRequested();
        foreach (var c in columns)
        {
            if (PhysicalOf(c.Type) is null)
                throw new ArgumentException($"column {c.Name}: {c.Type.Name} is not supported (double, double?, long, int, bool, string)", nameof(columns));
            if (c.Delta && c.Type != typeof(long))
                throw new ArgumentException($"column {c.Name}: delta encoding is for int64 columns", nameof(columns));
            if (c.Split && c.Type != typeof(double))
                throw new ArgumentException($"column {c.Name}: byte stream split is for float64 columns", nameof(columns));
            if (c.Categories is not null && c.Type != typeof(string))
                throw new ArgumentException($"column {c.Name}: categories are for text columns", nameof(columns));
        }
        var file = new AtomicFile(path);
        try
        {
            using var schema = Schema(columns);
            using var properties = Properties(columns, compression);
            var writer = new ParquetFileWriter(file.TemporaryPath, schema, properties, metadata.ToDictionary());
            return Task.FromResult(new ParquetTable(file, writer, [.. columns]));
        }
        catch
        {
            file.Dispose();
            throw;
        }
    }

    private static PhysicalType? PhysicalOf(Type t) =>
        t == typeof(double) || t == typeof(double?) ? PhysicalType.Double
        : t == typeof(long) ? PhysicalType.Int64
        : t == typeof(int) ? PhysicalType.Int32
        : t == typeof(bool) ? PhysicalType.Boolean
        : t == typeof(string) ? PhysicalType.ByteArray
        : null;

    private static GroupNode Schema(IReadOnlyList<ColumnSpec> columns)
    {
        var nodes = columns.Select(c => (Node)new PrimitiveNode(c.Name,
            c.Type == typeof(double?) ? Repetition.Optional : Repetition.Required,
            c.Type == typeof(string) ? LogicalType.String() : LogicalType.None(),
            PhysicalOf(c.Type)!.Value)).ToArray();
        try
        {
            return new GroupNode("schema", Repetition.Required, nodes);
        }
        finally
        {
            foreach (var n in nodes) n.Dispose();
        }
    }

    private static WriterProperties Properties(IReadOnlyList<ColumnSpec> columns, ParquetCompression compression)
    {
        using var builder = new WriterPropertiesBuilder();
        builder.CreatedBy($"decohere {Provenance.Version}")
            .Compression(compression switch
            {
                ParquetCompression.Snappy => Compression.Snappy,
                ParquetCompression.Zstd => Compression.Zstd,
                _ => Compression.Uncompressed,
            })
            .DisableDictionary();
        if (compression == ParquetCompression.Zstd) builder.CompressionLevel(1);
        foreach (var c in columns)
        {
            if (c.Dictionary) builder.EnableDictionary(c.Name);
            if (c.Delta) builder.Encoding(c.Name, Encoding.DeltaBinaryPacked);
            if (c.Split) builder.Encoding(c.Name, Encoding.ByteStreamSplit);
            if (!c.Statistics) builder.DisableStatistics(c.Name);
        }
        return builder.Build();
    }

    /// <summary>
    /// Writes one row group; <paramref name="columns"/> holds one array per column in schema order: double[] (for a
    /// nullable column NaN and ±∞ become null), double?[], long[], int[], bool[], string[] or ReadOnlyMemory&lt;char&gt;[]
    /// for a string column, each of length <paramref name="rows"/> or more; an array of exactly one element stands for
    /// that value on every row.
    /// </summary>
    public Task WriteRowGroupAsync(int rows, IReadOnlyList<Array> columns, CancellationToken cancel = default)
    {
        cancel.ThrowIfCancellationRequested();
        WriteRowGroup(rows, columns);
        return Task.CompletedTask;
    }

    /// <summary>The synchronous form of <see cref="WriteRowGroupAsync"/> (the native writer does not wait on anything).</summary>
    public void WriteRowGroup(int rows, IReadOnlyList<Array> columns) => WriteRowGroup(0, rows, columns);

    // Rows [start, start + rows) of every column (a one-element column is the same value on every row).
    private void WriteRowGroup(int start, int rows, IReadOnlyList<Array> columns)
    {
        if (columns.Count != _columns.Length)
            throw new ArgumentException($"expected {_columns.Length} columns, got {columns.Count}", nameof(columns));
        ArgumentOutOfRangeException.ThrowIfNegative(rows);
        for (int c = 0; c < columns.Count; c++)
            if (columns[c].Length < start + rows && columns[c].Length != 1)
                throw new ArgumentException($"column {_columns[c].Name}: {columns[c].Length} values for {start + rows} rows", nameof(columns));
        using var group = _writer.AppendRowGroup();
        for (int c = 0; c < _columns.Length; c++)
        {
            using var column = group.NextColumn();
            WriteColumn(column, c, columns[c], columns[c].Length == 1 ? 0 : start, rows);
        }
        RowCount += rows;
    }

    /// <summary>
    /// Writes one row group of <paramref name="rows"/> rows in chunks as long as <paramref name="buffers"/> (one array per
    /// column, of the types <see cref="WriteRowGroup(int, IReadOnlyList{Array})"/> takes, or of one element for a constant):
    /// <paramref name="fill"/>(start, count) puts rows [start, start + count) into the first count entries of every buffer.
    /// The columns' pages wait in memory until the group is complete (a buffered row group), so a few thousand rows of
    /// buffers, reused and kept in the cache, serve a group of any size. With buffers a multiple of 1024 rows long the file
    /// has the bytes whole columns give (the native writer checks its page size every 1024 values).
    /// </summary>
    public void WriteRowGroup(int rows, IReadOnlyList<Array> buffers, Action<int, int> fill)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(rows);
        if (buffers.Count != _columns.Length)
            throw new ArgumentException($"expected {_columns.Length} columns, got {buffers.Count}", nameof(buffers));
        int chunk = buffers.Where(b => b.Length != 1).Select(b => b.Length).DefaultIfEmpty(rows).Min();
        if (chunk < 1 && rows > 0) throw new ArgumentException("a buffer has no room for a row", nameof(buffers));
        using var group = _writer.AppendBufferedRowGroup();
        var writers = new ColumnWriter[_columns.Length];
        try
        {
            for (int c = 0; c < writers.Length; c++) writers[c] = group.Column(c);
            for (int start = 0; start < rows; start += chunk)
            {
                int count = Math.Min(chunk, rows - start);
                fill(start, count);
                for (int c = 0; c < writers.Length; c++) WriteColumn(writers[c], c, buffers[c], 0, count);
            }
        }
        finally
        {
            foreach (var w in writers) w?.Dispose();
        }
        RowCount += rows;
    }

    // Rows [from, from + rows) of one column's array (a one-element array is the same value on every row).
    private void WriteColumn(ColumnWriter column, int c, Array data, int from, int rows)
    {
        var spec = _columns[c];
        switch (data)
        {
            case double[] d when spec.Type == typeof(double?): WriteOptional((ColumnWriter<double>)column, Span(d, from, rows, ref _values)); break;
            case double?[] nd when spec.Type == typeof(double?): WriteOptional((ColumnWriter<double>)column, Span(nd, from, rows, ref _nullables)); break;
            case double[] d when spec.Type == typeof(double): ((ColumnWriter<double>)column).WriteBatch(Span(d, from, rows, ref _values)); break;
            case long[] l when spec.Type == typeof(long): ((ColumnWriter<long>)column).WriteBatch(Span(l, from, rows, ref _longs)); break;
            case int[] i when spec.Type == typeof(int): ((ColumnWriter<int>)column).WriteBatch(Span(i, from, rows, ref _ints)); break;
            case bool[] b when spec.Type == typeof(bool): ((ColumnWriter<bool>)column).WriteBatch(Span(b, from, rows, ref _bools)); break;
            case string[] s when spec.Type == typeof(string): WriteText((ColumnWriter<ByteArray>)column, rows, s.Length == 1, k => s[from + k].AsSpan()); break;
            case ReadOnlyMemory<char>[] m when spec.Type == typeof(string): WriteText((ColumnWriter<ByteArray>)column, rows, m.Length == 1, k => m[from + k].Span); break;
            case int[] k when _categories[c] is { } categories: WriteCategories((ColumnWriter<ByteArray>)column, categories, Span(k, from, rows, ref _ints), spec.Name); break;
            default:
                throw new ArgumentException($"column {spec.Name} ({spec.Type.Name}): unsupported array type {data.GetType().Name}", nameof(data));
        }
    }

    // Rows [from, from + rows) of the array, or its single value repeated into a reused buffer.
    private static ReadOnlySpan<T> Span<T>(T[] values, int from, int rows, ref T[] buffer)
    {
        if (values.Length != 1 || rows <= 1) return values.AsSpan(from, rows);
        if (buffer.Length < rows) buffer = new T[rows];
        buffer.AsSpan(0, rows).Fill(values[0]);
        return buffer.AsSpan(0, rows);
    }

    // An OPTIONAL column: a definition level per row (1 defined, 0 null) and the defined values alone, in order.
    private void WriteOptional(ColumnWriter<double> column, ReadOnlySpan<double> values)
    {
        var levels = Levels(values.Length);
        if (_defined.Length < values.Length) _defined = new double[values.Length];
        int defined = 0;
        for (int r = 0; r < values.Length; r++)
        {
            bool finite = double.IsFinite(values[r]);
            levels[r] = (short)(finite ? 1 : 0);
            if (finite) _defined[defined++] = values[r];
        }
        column.WriteBatch(values.Length, levels, default, _defined.AsSpan(0, defined));
    }

    private void WriteOptional(ColumnWriter<double> column, ReadOnlySpan<double?> values)
    {
        var levels = Levels(values.Length);
        if (_defined.Length < values.Length) _defined = new double[values.Length];
        int defined = 0;
        for (int r = 0; r < values.Length; r++)
        {
            bool finite = values[r] is { } v && double.IsFinite(v);
            levels[r] = (short)(finite ? 1 : 0);
            if (finite) _defined[defined++] = values[r]!.Value;
        }
        column.WriteBatch(values.Length, levels, default, _defined.AsSpan(0, defined));
    }

    private Span<short> Levels(int rows)
    {
        if (_levels.Length < rows) _levels = new short[rows];
        return _levels.AsSpan(0, rows);
    }

    // Text as UTF-8 in one buffer pinned for the call; a repeated value is encoded once.
    private void WriteText(ColumnWriter<ByteArray> column, int rows, bool repeated, SpanGetter text)
    {
        int distinct = repeated ? Math.Min(rows, 1) : rows;
        int bytes = 0;
        for (int k = 0; k < distinct; k++) bytes += System.Text.Encoding.UTF8.GetByteCount(text(k));
        if (_text.Length < bytes + 1) _text = new byte[bytes + 1];
        if (_strings.Length < rows) _strings = new ByteArray[rows];
        if (_ends.Length < distinct) _ends = new int[distinct];
        for (int k = 0, at = 0; k < distinct; k++)
        {
            at += System.Text.Encoding.UTF8.GetBytes(text(k), _text.AsSpan(at));
            _ends[k] = at;
        }
        unsafe
        {
            fixed (byte* start = _text)
            {
                for (int r = 0; r < rows; r++)
                {
                    int k = repeated ? 0 : r, from = k == 0 ? 0 : _ends[k - 1];
                    _strings[r] = new ByteArray((IntPtr)(start + from), _ends[k] - from);
                }
                column.WriteBatch(_strings.AsSpan(0, rows));
            }
        }
    }

    private delegate ReadOnlySpan<char> SpanGetter(int index);

    private void WriteCategories(ColumnWriter<ByteArray> column, ByteArray[] categories, ReadOnlySpan<int> indices, string name)
    {
        if (_strings.Length < indices.Length) _strings = new ByteArray[indices.Length];
        for (int r = 0; r < indices.Length; r++)
        {
            if ((uint)indices[r] >= (uint)categories.Length)
                throw new ArgumentException($"column {name}: category {indices[r]} of {categories.Length}", nameof(indices));
            _strings[r] = categories[indices[r]];
        }
        column.WriteBatch(_strings.AsSpan(0, indices.Length));
    }

    /// <summary>Finishes the file and moves it to its final name.</summary>
    public Task CommitAsync()
    {
        Close();
        _file.Commit();
        return Task.CompletedTask;
    }

    private void Close()
    {
        if (_closed) return;
        _closed = true;
        try
        {
            _writer.Close();
        }
        finally
        {
            _writer.Dispose();
        }
    }

    /// <summary>Closes the file; deletes it unless committed.</summary>
    public ValueTask DisposeAsync()
    {
        try
        {
            if (!_closed)
            {
                _closed = true;
                _writer.Dispose();
            }
        }
        finally
        {
            _file.Dispose();
        }
        return ValueTask.CompletedTask;
    }

    /// <summary>Writes a whole in-memory table as one file (row groups of at most <paramref name="rowGroup"/> rows).</summary>
    public static async Task WriteAsync(string path, IReadOnlyList<ColumnSpec> columns, IReadOnlyList<Array> data,
        IReadOnlyDictionary<string, string> metadata, int rowGroup = 1 << 20, CancellationToken cancel = default,
        ParquetCompression compression = ParquetCompression.Zstd)
    {
        int rows = data.Count == 0 ? 0 : data.Max(a => a.Length);
        await using var table = await CreateAsync(path, columns, metadata, cancel, compression);
        for (int start = 0; start == 0 || start < rows; start += rowGroup)
        {
            cancel.ThrowIfCancellationRequested();
            table.WriteRowGroup(start, Math.Min(rowGroup, rows - start), data);
        }
        await table.CommitAsync();
    }
}

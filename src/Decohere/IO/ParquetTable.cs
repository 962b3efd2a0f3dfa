using Parquet;
using Parquet.Schema;

namespace Decohere.IO;

/// <summary>A column of a table to write: name (with its unit, e.g. time_s) and CLR element type.</summary>
public sealed record ColumnSpec(string Name, Type Type)
{
    /// <summary>A float64 column.</summary>
    public static ColumnSpec Double(string name) => new(name, typeof(double));
    /// <summary>A nullable float64 column (null where a value does not exist).</summary>
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

/// <summary>
/// A Parquet file written in row groups (so tables larger than memory stream through) and committed atomically.
/// Disposing without <see cref="CommitAsync"/> deletes the partial file.
/// </summary>
public sealed class ParquetTable : IAsyncDisposable
{
    private readonly AtomicFile _file;
    private readonly FileStream _stream;
    private readonly ParquetWriter _writer;
    private readonly DataField[] _fields;
    private readonly ColumnSpec[] _columns;
    private bool _closed;

    private ParquetTable(AtomicFile file, FileStream stream, ParquetWriter writer, DataField[] fields, ColumnSpec[] columns)
    {
        _file = file;
        _stream = stream;
        _writer = writer;
        _fields = fields;
        _columns = columns;
    }

    /// <summary>Total rows written so far.</summary>
    public long RowCount { get; private set; }

    /// <summary>Opens a table for writing with key-value metadata stored in the file footer.</summary>
    /// <param name="path">Final file name (written to a temporary name until committed).</param>
    /// <param name="columns">The schema.</param>
    /// <param name="metadata">Footer key-value metadata.</param>
    /// <param name="cancel">Cancels the opening.</param>
    public static async Task<ParquetTable> CreateAsync(string path, IReadOnlyList<ColumnSpec> columns,
        IReadOnlyDictionary<string, string> metadata, CancellationToken cancel = default)
    {
        var file = new AtomicFile(path);
        var fields = columns.Select(c => c.Type == typeof(double?)
            ? new DataField(c.Name, typeof(double), isNullable: true)
            : new DataField(c.Name, c.Type, isNullable: false)).ToArray();
        var stream = new FileStream(file.TemporaryPath, FileMode.Create, FileAccess.ReadWrite, FileShare.None, 1 << 16);
        var writer = await ParquetWriter.CreateAsync(new ParquetSchema(fields), stream, cancellationToken: cancel);
        writer.CustomMetadata = metadata.ToDictionary();
        return new ParquetTable(file, stream, writer, fields, [.. columns]);
    }

    /// <summary>
    /// Writes one row group; <paramref name="columns"/> holds one array per column in schema order
    /// (double[], double?[], long[], int[], bool[], string[], or ReadOnlyMemory&lt;char&gt;[] for a string column — written
    /// without a per-row string conversion), all of length <paramref name="rows"/> or more.
    /// </summary>
    public async Task WriteRowGroupAsync(int rows, IReadOnlyList<Array> columns, CancellationToken cancel = default)
    {
        if (columns.Count != _fields.Length)
            throw new ArgumentException($"expected {_fields.Length} columns, got {columns.Count}", nameof(columns));
        using var group = _writer.CreateRowGroup();
        for (int c = 0; c < _fields.Length; c++)
        {
            var field = _fields[c];
            switch (columns[c])
            {
                case double?[] nd: await group.WriteAsync<double>(field, nd.AsMemory(0, rows), cancellationToken: cancel); break;
                case double[] d: await group.WriteAsync<double>(field, d.AsMemory(0, rows), cancellationToken: cancel); break;
                case long[] l: await group.WriteAsync<long>(field, l.AsMemory(0, rows), cancellationToken: cancel); break;
                case int[] i: await group.WriteAsync<int>(field, i.AsMemory(0, rows), cancellationToken: cancel); break;
                case bool[] b: await group.WriteAsync<bool>(field, b.AsMemory(0, rows), cancellationToken: cancel); break;
                case ReadOnlyMemory<char>[] m:
                    if (_columns[c].Type != typeof(string)) throw new ArgumentException($"column {_columns[c].Name}: character data for a non-string column");
                    await group.WriteAsync<ReadOnlyMemory<char>>(field, m.AsMemory(0, rows), cancellationToken: cancel);
                    break;
                case string[] s: await group.WriteAsync(field, rows == s.Length ? s : s[..rows]); break;
                default: throw new ArgumentException($"column {_columns[c].Name}: unsupported array type {columns[c].GetType().Name}");
            }
        }
        group.CompleteValidate();
        RowCount += rows;
    }

    /// <summary>Finishes the file and moves it to its final name.</summary>
    public async Task CommitAsync()
    {
        await CloseAsync();
        _file.Commit();
    }

    private async Task CloseAsync()
    {
        if (_closed) return;
        _closed = true;
        await _writer.DisposeAsync();
        await _stream.DisposeAsync();
    }

    /// <summary>Closes the file; deletes it unless committed.</summary>
    public async ValueTask DisposeAsync()
    {
        await CloseAsync();
        _file.Dispose();
    }

    /// <summary>Writes a whole in-memory table as one file (row groups of at most <paramref name="rowGroup"/> rows).</summary>
    public static async Task WriteAsync(string path, IReadOnlyList<ColumnSpec> columns, IReadOnlyList<Array> data,
        IReadOnlyDictionary<string, string> metadata, int rowGroup = 1 << 20, CancellationToken cancel = default)
    {
        int rows = data.Count == 0 ? 0 : data[0].Length;
        await using var table = await CreateAsync(path, columns, metadata, cancel);
        for (int start = 0; start < rows || (rows == 0 && start == 0); start += rowGroup)
        {
            int count = Math.Min(rowGroup, rows - start);
            if (start == 0 && count == rows)
                await table.WriteRowGroupAsync(rows, data, cancel);
            else
                await table.WriteRowGroupAsync(count, data.Select(a => Slice(a, start, count)).ToArray(), cancel);
            if (rows == 0) break;
        }
        await table.CommitAsync();
    }

    private static Array Slice(Array a, int start, int count)
    {
        var result = Array.CreateInstance(a.GetType().GetElementType()!, count);
        Array.Copy(a, start, result, 0, count);
        return result;
    }
}

using System.Buffers.Binary;
using System.Runtime.InteropServices;
using System.Text;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>
/// A minimal Parquet writer for wide streams of shots: flat tables of required float64, int64 and UTF-8 columns, PLAIN
/// encoding (a column constant over a row group as a one-entry dictionary and a single RLE run, so it costs a few bytes),
/// no compression, one data page per column chunk, and the footer in the Thrift compact protocol (Apache
/// Parquet format specification, parquet-format 2.x, "File format" and "Data pages"; Apache Thrift compact protocol
/// specification). Writing is a copy of the column arrays, which a general writer's per-value encoding cannot match:
/// measured on prepared batches (tools/Decohere.Benchmarks, figure <c>shots</c>), this writer put down 51 M samples/s
/// (109 M per CPU second) where ParquetSharp's column writers, with the same encodings, managed 13 M (21 M per CPU second;
/// Snappy and Zstandard were slower still and saved at most 4% on random doubles). It serves shots.parquet alone; every
/// other table goes through <see cref="ParquetTable"/>. Committed atomically like <see cref="ParquetTable"/>.
/// </summary>
public sealed class PlainParquetWriter : IAsyncDisposable
{
    private const int TypeInt64 = 2, TypeDouble = 5, TypeByteArray = 6;
    private readonly AtomicFile _file;
    private readonly FileStream _stream;
    private readonly ColumnSpec[] _columns;
    private readonly Dictionary<string, string> _metadata;
    private readonly List<(long Rows, long Bytes, Chunk[] Chunks)> _rowGroups = [];

    // Where a column chunk sits: its first page, the data page, its size; a dictionary page comes first when there is one.
    private readonly record struct Chunk(long Start, long DataPage, long Size, long Values, bool Dictionary);
    private readonly byte[] _header = new byte[64];
    private bool _closed;

    /// <summary>Opens a table of the given columns (double, long or string) for writing.</summary>
    public PlainParquetWriter(string path, IReadOnlyList<ColumnSpec> columns, IReadOnlyDictionary<string, string> metadata)
    {
        foreach (var c in columns)
            if (c.Type != typeof(double) && c.Type != typeof(long) && c.Type != typeof(string))
                throw new ArgumentException($"column {c.Name}: {c.Type.Name} is not supported (double, long, string)", nameof(columns));
        _columns = [.. columns];
        _metadata = metadata.ToDictionary();
        _file = new AtomicFile(path);
        _stream = new FileStream(_file.TemporaryPath, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 20);
        _stream.Write("PAR1"u8);
    }

    /// <summary>
    /// Writes one row group: one array per column in schema order (double[], long[] or string[]) holding at least
    /// <paramref name="rows"/> values; an array of exactly one element stands for that value on every row.
    /// </summary>
    public void WriteRowGroup(int rows, IReadOnlyList<Array> data)
    {
        if (data.Count != _columns.Length) throw new ArgumentException($"expected {_columns.Length} columns, got {data.Count}", nameof(data));
        for (int c = 0; c < data.Count; c++)
            if (data[c].Length != 1 && data[c].Length < rows)
                throw new ArgumentException($"column {_columns[c].Name}: {data[c].Length} values for {rows} rows", nameof(data));
        var chunks = new Chunk[_columns.Length];
        long start = _stream.Position;
        for (int c = 0; c < _columns.Length; c++)
        {
            long offset = _stream.Position;
            var column = data[c];
            bool constant = column.Length == 1;
            if (constant)
                WriteDictionaryPage(Plain(column, 1));
            long dataPage = _stream.Position;
            if (constant)
                WriteConstantPage(rows);
            else
                WritePage(rows, 0, Plain(column, rows));
            chunks[c] = new Chunk(offset, dataPage, _stream.Position - offset, rows, constant);
        }
        _rowGroups.Add((rows, _stream.Position - start, chunks));
    }

    // PLAIN encoding: numbers as little-endian bytes; byte arrays as a 4-byte little-endian length and the UTF-8 bytes.
    private static ReadOnlySpan<byte> Plain(Array column, int rows) => column switch
    {
        double[] d => MemoryMarshal.AsBytes(d.AsSpan(0, rows)),
        long[] l => MemoryMarshal.AsBytes(l.AsSpan(0, rows)),
        string[] s => s.Take(rows).SelectMany(v => BitConverter.GetBytes(Encoding.UTF8.GetByteCount(v)).Concat(Encoding.UTF8.GetBytes(v))).ToArray(),
        _ => throw new ArgumentException($"unsupported column array {column.GetType().Name}"),
    };

    private void WritePage(int rows, int encoding, ReadOnlySpan<byte> values)
    {
        var t = new ThriftWriter();
        t.I32(1, 0);              // type: DATA_PAGE
        t.I32(2, values.Length);  // uncompressed_page_size
        t.I32(3, values.Length);  // compressed_page_size
        t.BeginStruct(5);         // data_page_header
        t.I32(1, rows);           // num_values
        t.I32(2, encoding);       // encoding: PLAIN (0) or PLAIN_DICTIONARY (2)
        t.I32(3, 3);              // definition_level_encoding: RLE (no levels are written: every column is required)
        t.I32(4, 3);              // repetition_level_encoding: RLE
        t.EndStruct();
        t.Stop();
        _stream.Write(t.Bytes);
        _stream.Write(values);
    }

    private void WriteDictionaryPage(ReadOnlySpan<byte> value)
    {
        var t = new ThriftWriter();
        t.I32(1, 2);              // type: DICTIONARY_PAGE
        t.I32(2, value.Length);
        t.I32(3, value.Length);
        t.BeginStruct(7);         // dictionary_page_header
        t.I32(1, 1);              // num_values: one entry
        t.I32(2, 2);              // encoding: PLAIN_DICTIONARY
        t.EndStruct();
        t.Stop();
        _stream.Write(t.Bytes);
        _stream.Write(value);
    }

    // Every row points at dictionary entry 0: bit width 1, then one RLE run (header = count << 1) of the value 0.
    private void WriteConstantPage(int rows)
    {
        var run = new List<byte> { 1 };
        for (ulong v = (ulong)rows << 1; ; v >>= 7)
        {
            if (v < 0x80) { run.Add((byte)v); break; }
            run.Add((byte)(v | 0x80));
        }
        run.Add(0);
        WritePage(rows, 2, CollectionsMarshal.AsSpan(run));
    }

    private byte[] Footer()
    {
        var t = new ThriftWriter();
        t.I32(1, 1);                                                  // version
        t.BeginList(2, ThriftWriter.Struct, _columns.Length + 1);    // schema
        t.BeginElement(); t.String(4, "schema"); t.I32(5, _columns.Length); t.EndElement();
        foreach (var c in _columns)
        {
            t.BeginElement();
            t.I32(1, TypeOf(c));
            t.I32(3, 0);                                              // repetition_type: REQUIRED
            t.String(4, c.Name);
            if (c.Type == typeof(string))
            {
                t.I32(6, 0);                                          // converted_type: UTF8
                t.BeginStruct(10); t.BeginStruct(1); t.EndStruct(); t.EndStruct();   // logicalType: STRING
            }
            t.EndElement();
        }
        t.I64(3, _rowGroups.Sum(g => g.Rows));                       // num_rows
        t.BeginList(4, ThriftWriter.Struct, _rowGroups.Count);       // row_groups
        foreach (var g in _rowGroups)
        {
            t.BeginElement();
            t.BeginList(1, ThriftWriter.Struct, _columns.Length);    // columns
            for (int c = 0; c < _columns.Length; c++)
            {
                var chunk = g.Chunks[c];
                t.BeginElement();
                t.I64(2, chunk.Start);                                // file_offset
                t.BeginStruct(3);                                     // meta_data
                t.I32(1, TypeOf(_columns[c]));
                t.BeginList(2, ThriftWriter.I32Type, 2); t.ListI32(chunk.Dictionary ? 2 : 0); t.ListI32(3);   // encodings
                t.BeginList(3, ThriftWriter.Binary, 1); t.ListString(_columns[c].Name); // path_in_schema
                t.I32(4, 0);                                          // codec: UNCOMPRESSED
                t.I64(5, chunk.Values);
                t.I64(6, chunk.Size);
                t.I64(7, chunk.Size);
                t.I64(9, chunk.DataPage);                             // data_page_offset
                if (chunk.Dictionary) t.I64(11, chunk.Start);         // dictionary_page_offset
                t.EndStruct();
                t.EndElement();
            }
            t.I64(2, g.Bytes);                                        // total_byte_size
            t.I64(3, g.Rows);                                         // num_rows
            t.EndElement();
        }
        t.BeginList(5, ThriftWriter.Struct, _metadata.Count);        // key_value_metadata
        foreach (var (key, value) in _metadata)
        {
            t.BeginElement(); t.String(1, key); t.String(2, value); t.EndElement();
        }
        t.String(6, $"decohere {Provenance.Version}");              // created_by
        t.Stop();
        return t.Bytes.ToArray();
    }

    private static int TypeOf(ColumnSpec c) => c.Type == typeof(double) ? TypeDouble : c.Type == typeof(long) ? TypeInt64 : TypeByteArray;

    /// <summary>Writes the footer and moves the file to its final name.</summary>
    public async Task CommitAsync()
    {
        byte[] footer = Footer();
        _stream.Write(footer);
        Span<byte> length = stackalloc byte[4];
        BinaryPrimitives.WriteInt32LittleEndian(length, footer.Length);
        _stream.Write(length);
        _stream.Write("PAR1"u8);
        await CloseAsync();
        _file.Commit();
    }

    private async Task CloseAsync()
    {
        if (_closed) return;
        _closed = true;
        await _stream.DisposeAsync();
    }

    /// <summary>Closes the file; deletes it unless committed.</summary>
    public async ValueTask DisposeAsync()
    {
        await CloseAsync();
        _file.Dispose();
    }

    /// <summary>The Thrift compact protocol, just what a Parquet footer and page header need.</summary>
    private sealed class ThriftWriter
    {
        public const byte I32Type = 5, Binary = 8, Struct = 12;
        private const byte I64Type = 6, ListType = 9;
        private readonly List<byte> _bytes = [];
        private readonly Stack<short> _lastField = new([0]);

        public ReadOnlySpan<byte> Bytes => CollectionsMarshal.AsSpan(_bytes);

        private void Field(short id, byte type)
        {
            short last = _lastField.Pop();
            int delta = id - last;
            if (delta > 0 && delta <= 15) _bytes.Add((byte)((delta << 4) | type));
            else { _bytes.Add(type); Varint(ZigZag(id)); }
            _lastField.Push(id);
        }

        private void Varint(ulong v)
        {
            while (v >= 0x80) { _bytes.Add((byte)(v | 0x80)); v >>= 7; }
            _bytes.Add((byte)v);
        }

        private static ulong ZigZag(long v) => (ulong)((v << 1) ^ (v >> 63));

        public void I32(short id, int v) { Field(id, I32Type); Varint(ZigZag(v)); }
        public void I64(short id, long v) { Field(id, I64Type); Varint(ZigZag(v)); }
        public void String(short id, string v) { Field(id, Binary); Raw(v); }
        public void ListI32(int v) => Varint(ZigZag(v));
        public void ListString(string v) => Raw(v);

        private void Raw(string v)
        {
            byte[] b = Encoding.UTF8.GetBytes(v);
            Varint((ulong)b.Length);
            _bytes.AddRange(b);
        }

        public void BeginStruct(short id) { Field(id, Struct); _lastField.Push(0); }
        public void EndStruct() { _bytes.Add(0); _lastField.Pop(); }
        public void BeginElement() => _lastField.Push(0);
        public void EndElement() { _bytes.Add(0); _lastField.Pop(); }
        public void Stop() => _bytes.Add(0);

        public void BeginList(short id, byte elementType, int count)
        {
            Field(id, ListType);
            if (count < 15) _bytes.Add((byte)((count << 4) | elementType));
            else { _bytes.Add((byte)(0xF0 | elementType)); Varint((ulong)count); }
        }
    }
}

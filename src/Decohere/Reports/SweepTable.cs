using ParquetSharp;
using System.Text.RegularExpressions;
using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>
/// sweep.parquet (and its part and chunk files): one row per point, columns <c>point</c> (int64), <c>seed</c> (int64),
/// one float64 column per varied parameter (<see cref="Scenarios.ParameterPath.ColumnName"/>, SI unit in the name),
/// one nullable float64 column per metric (null where the point failed) and <c>error</c> (UTF-8, empty if none).
/// Rows are sorted by point.
/// </summary>
public static partial class SweepTable
{
    /// <summary>Rows per row group; fixed, so that equal rows give equal files however they were computed.</summary>
    public const int RowGroupRows = 1 << 16;

    /// <summary>Tables from this many rows on are Zstandard-compressed; smaller ones are written plain.</summary>
    public const int CompressFromRows = 4096;

    /// <summary>The columns of a sweep's table, in file order.</summary>
    public static IReadOnlyList<ColumnSpec> Columns(SweepDescription d) =>
    [
        ColumnSpec.Long("point"), ColumnSpec.Long("seed"),
        .. d.Axes.Select(a => ColumnSpec.Double(a.Column)),
        .. d.Metrics.Select(m => ColumnSpec.NullableDouble(m.Column)),
        ColumnSpec.String("error"),
    ];

    /// <summary>Writes rows (sorted here by point) atomically to <paramref name="path"/>.</summary>
    public static async Task WriteAsync(string path, SweepDescription description, IEnumerable<SweepRow> rows,
        IReadOnlyDictionary<string, string> metadata, CancellationToken cancel = default)
    {
        var sorted = rows.OrderBy(r => r.Point).ToArray();
        int parameters = description.Axes.Length, metrics = description.Metrics.Length;
        // Compressing a few thousand rows saves kilobytes and costs more than writing them (a codec per column chunk).
        var compression = sorted.Length < CompressFromRows ? ParquetCompression.None : ParquetCompression.Zstd;
        await using var table = await ParquetTable.CreateAsync(path, Columns(description), metadata, cancel, compression);
        for (int start = 0; start < sorted.Length || start == 0; start += RowGroupRows)
        {
            int n = Math.Min(RowGroupRows, sorted.Length - start);
            var point = new long[n];
            var seed = new long[n];
            var p = Enumerable.Range(0, parameters).Select(_ => new double[n]).ToArray();
            var m = Enumerable.Range(0, metrics).Select(_ => new double?[n]).ToArray();
            var error = new string[n];
            for (int i = 0; i < n; i++)
            {
                var row = sorted[start + i];
                point[i] = row.Point;
                seed[i] = row.Seed;
                for (int a = 0; a < parameters; a++) p[a][i] = row.Parameters[a];
                for (int k = 0; k < metrics; k++) m[k][i] = row.Metrics[k];
                error[i] = row.Error;
            }
            await table.WriteRowGroupAsync(n, [point, seed, .. p, .. m, error], cancel);
            if (sorted.Length == 0) break;
        }
        await table.CommitAsync();
    }

    [GeneratedRegex(@"^part-(?<k>\d+)-of-(?<n>\d+)\.parquet$")]
    private static partial Regex PartPattern();

    /// <summary>Reads every part file (part-K-of-N.parquet) of a sharded sweep in <paramref name="directory"/>, in name order.</summary>
    /// <exception cref="InputException">The directory does not exist, or a part is not a sweep file.</exception>
    public static async Task<IReadOnlyList<SweepPart>> ReadPartsAsync(string directory, CancellationToken cancel = default)
    {
        if (!Directory.Exists(directory)) throw new InputException($"merge: directory not found: {directory}");
        var parts = new List<SweepPart>();
        foreach (var file in Directory.GetFiles(directory).Where(f => PartPattern().IsMatch(Path.GetFileName(f))).Order(StringComparer.Ordinal))
            parts.Add(await ReadAsync(file, cancel));
        return parts;
    }

    /// <summary>Reads the footer metadata only (cheap: no column data).</summary>
    /// <exception cref="InputException">Not a Parquet file, or one without a sweep description.</exception>
    public static Task<IReadOnlyDictionary<string, string>> ReadMetadataAsync(string path, CancellationToken cancel = default) =>
        Task.Run(() => Read(path, file => Check(path, file)), cancel);

    /// <summary>Reads a sweep file written by <see cref="WriteAsync"/>.</summary>
    /// <exception cref="InputException">Not a sweep file, or columns that do not match its description.</exception>
    public static Task<SweepPart> ReadAsync(string path, CancellationToken cancel = default) => Task.Run(() => Read(path, file =>
    {
        var metadata = Check(path, file);
        var description = SweepDescription.FromJson(metadata[Sweep.MetadataKey], path);
        var expected = Columns(description);
        var schema = file.FileMetaData.Schema;
        var names = Enumerable.Range(0, schema.NumColumns).Select(c => schema.Column(c).Name).ToArray();
        bool matches = names.SequenceEqual(expected.Select(c => c.Name)) && Enumerable.Range(0, names.Length).All(c =>
            schema.Column(c).PhysicalType == Physical(expected[c].Type) && schema.Column(c).MaxRepetitionLevel == 0);
        if (!matches)
            throw new InputException($"{path}: columns [{string.Join(", ", names)}] do not match its sweep description [{string.Join(", ", expected.Select(c => c.Name))}]");
        int parameters = description.Axes.Length, metrics = description.Metrics.Length;
        var rows = new List<SweepRow>();
        for (int g = 0; g < file.FileMetaData.NumRowGroups; g++)
        {
            cancel.ThrowIfCancellationRequested();
            using var group = file.RowGroup(g);
            int n = checked((int)group.MetaData.NumRows);
            var point = Numbers<long>(group, 0, n, path);
            var seed = Numbers<long>(group, 1, n, path);
            var p = Enumerable.Range(0, parameters).Select(a => Numbers<double>(group, 2 + a, n, path)).ToArray();
            var m = Enumerable.Range(0, metrics).Select(k => Optional(group, 2 + parameters + k, n, path)).ToArray();
            var error = Texts(group, 2 + parameters + metrics, n, path);
            for (int i = 0; i < n; i++)
                rows.Add(new SweepRow(point[i], seed[i], [.. p.Select(c => c[i])], [.. m.Select(c => c[i])], error[i]));
        }
        return new SweepPart(path, metadata, description, rows);
    }), cancel);

    private static PhysicalType Physical(Type t) =>
        t == typeof(long) ? PhysicalType.Int64 : t == typeof(string) ? PhysicalType.ByteArray : PhysicalType.Double;

    // Through ParquetSharp's physical column readers (no reflection over logical types): definition levels say where a
    // value is null; a required column has none.
    private static T[] Numbers<T>(RowGroupReader group, int column, int rows, string path) where T : unmanaged
    {
        using var reader = (ColumnReader<T>)group.Column(column);
        var values = new T[rows];
        var levels = new short[rows];
        int done = 0;
        while (done < rows)
        {
            long read = reader.ReadBatch(rows - done, levels.AsSpan(done), default, values.AsSpan(done), out long count);
            if (read <= 0 || count != read) throw Truncated(path, column, done, rows);
            done += (int)read;
        }
        return values;
    }

    private static double?[] Optional(RowGroupReader group, int column, int rows, string path)
    {
        using var reader = (ColumnReader<double>)group.Column(column);
        var result = new double?[rows];
        var levels = new short[rows];
        var values = new double[rows];
        int done = 0, defined = 0;
        while (done < rows)
        {
            long read = reader.ReadBatch(rows - done, levels.AsSpan(done), default, values.AsSpan(defined), out long count);
            if (read <= 0) throw Truncated(path, column, done, rows);
            done += (int)read;
            defined += (int)count;
        }
        // Every row defined (always so in a REQUIRED column, whose levels the reader leaves unwritten), or by its level.
        for (int r = 0, v = 0; r < rows; r++)
            result[r] = defined == rows || levels[r] > 0 ? values[v++] : null;
        return result;
    }

    private static string[] Texts(RowGroupReader group, int column, int rows, string path)
    {
        using var reader = (ColumnReader<ByteArray>)group.Column(column);
        var result = new string[rows];
        var levels = new short[rows];
        var values = new ByteArray[rows];
        int done = 0;
        while (done < rows)
        {
            // The byte arrays point into the reader's page: decode them before the next read.
            long read = reader.ReadBatch(rows - done, levels.AsSpan(done), default, values.AsSpan(done), out long count);
            if (read <= 0 || count != read) throw Truncated(path, column, done, rows);
            for (int r = done; r < done + read; r++)
                unsafe { result[r] = System.Text.Encoding.UTF8.GetString((byte*)values[r].Pointer, values[r].Length); }
            done += (int)read;
        }
        return result;
    }

    private static InputException Truncated(string path, int column, int done, int rows) =>
        new($"{path}: column {column} ends after {done} of {rows} rows of its row group");

    private static T Read<T>(string path, Func<ParquetFileReader, T> read)
    {
        try
        {
            using var file = new ParquetFileReader(path);
            return read(file);
        }
        catch (Exception e) when (e is not InputException and not OperationCanceledException and not OutOfMemoryException)
        {
            string reason = e.Message.Split('\n')[0].Trim();
            throw new InputException($"{path}: not a readable Parquet file ({(reason.Length > 300 ? reason[..300] + "..." : reason)})");
        }
    }

    private static IReadOnlyDictionary<string, string> Check(string path, ParquetFileReader file)
    {
        var metadata = file.FileMetaData.KeyValueMetadata;
        if (!metadata.ContainsKey(Sweep.MetadataKey))
            throw new InputException($"{path}: not a sweep table (no {Sweep.MetadataKey} metadata)");
        return metadata;
    }
}

using Parquet;
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
        await using var table = await ParquetTable.CreateAsync(path, Columns(description), metadata, cancel);
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
    public static async Task<IReadOnlyDictionary<string, string>> ReadMetadataAsync(string path, CancellationToken cancel = default)
    {
        await using var stream = File.OpenRead(path);
        await using var reader = await Open(path, stream, cancel);
        return Check(path, reader);
    }

    /// <summary>Reads a sweep file written by <see cref="WriteAsync"/>.</summary>
    /// <exception cref="InputException">Not a sweep file, or columns that do not match its description.</exception>
    public static async Task<SweepPart> ReadAsync(string path, CancellationToken cancel = default)
    {
        await using var stream = File.OpenRead(path);
        await using var reader = await Open(path, stream, cancel);
        var metadata = Check(path, reader);
        var description = SweepDescription.FromJson(metadata[Sweep.MetadataKey], path);
        var expected = Columns(description).Select(c => c.Name).ToArray();
        var fields = reader.Schema.GetDataFields();
        if (!fields.Select(f => f.Name).SequenceEqual(expected))
            throw new InputException($"{path}: columns [{string.Join(", ", fields.Select(f => f.Name))}] do not match its sweep description [{string.Join(", ", expected)}]");
        int parameters = description.Axes.Length, metrics = description.Metrics.Length;
        var rows = new List<SweepRow>();
        for (int g = 0; g < reader.RowGroupCount; g++)
        {
            using var group = reader.OpenRowGroupReader(g);
            int n = checked((int)group.RowCount);
            var point = new long[n];
            var seed = new long[n];
            var p = Enumerable.Range(0, parameters).Select(_ => new double[n]).ToArray();
            var m = Enumerable.Range(0, metrics).Select(_ => new double?[n]).ToArray();
            var error = new string?[n];
            await group.ReadAsync<long>(fields[0], point.AsMemory(), cancellationToken: cancel);
            await group.ReadAsync<long>(fields[1], seed.AsMemory(), cancellationToken: cancel);
            for (int a = 0; a < parameters; a++) await group.ReadAsync<double>(fields[2 + a], p[a].AsMemory(), cancellationToken: cancel);
            for (int k = 0; k < metrics; k++) await group.ReadAsync<double>(fields[2 + parameters + k], m[k].AsMemory(), cancellationToken: cancel);
            await group.ReadAsync(fields[^1], error.AsMemory(), cancellationToken: cancel);
            for (int i = 0; i < n; i++)
                rows.Add(new SweepRow(point[i], seed[i], [.. p.Select(c => c[i])], [.. m.Select(c => c[i])], error[i] ?? ""));
        }
        return new SweepPart(path, metadata, description, rows);
    }

    private static async Task<ParquetReader> Open(string path, Stream stream, CancellationToken cancel)
    {
        try
        {
            return await ParquetReader.CreateAsync(stream, cancellationToken: cancel);
        }
        catch (Exception e) when (e is IOException or ParquetException or InvalidDataException)
        {
            throw new InputException($"{path}: not a readable Parquet file ({e.Message})");
        }
    }

    private static IReadOnlyDictionary<string, string> Check(string path, ParquetReader reader)
    {
        var metadata = reader.CustomMetadata ?? new Dictionary<string, string>();
        if (!metadata.ContainsKey(Sweep.MetadataKey))
            throw new InputException($"{path}: not a sweep table (no {Sweep.MetadataKey} metadata)");
        return metadata;
    }
}

using Decohere.Analyses.Sweeps;

namespace Decohere.Reports;

/// <summary>
/// Writes a sweep result: <c>sweep.parquet</c> (or a shard's <c>part-K-of-N.parquet</c>) and, for a whole sweep of one
/// axis, zipped axes or two axes, <c>sweep.png</c>/<c>.svg</c>. The finished table replaces the run's chunk files.
/// </summary>
public sealed class SweepReport : IReport<SweepResult>
{
    /// <summary>The table's file name for a result: the shard's part file or sweep.parquet.</summary>
    public static string TableName(SweepShard? shard) => shard?.FileName ?? "sweep.parquet";

    /// <inheritdoc/>
    public async Task<IReadOnlyList<string>> WriteAsync(SweepResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        string table = Path.Combine(directory, TableName(result.Shard));
        // The plot depends on the rows alone, so it is drawn beside the table, on the other core.
        var plot = result.Shard is null
            ? Task.Run(() => SweepPlot.Save(result.Description, result.Rows, Name(result), result.Provenance.ScenarioText, Path.Combine(directory, "sweep")), cancel)
            : Task.FromResult<string[]>([]);
        try
        {
            await SweepTable.WriteAsync(table, result.Description, result.Rows, result.Metadata(), cancel);
        }
        catch
        {
            await Task.WhenAny(plot);   // nothing is written after the report has returned
            throw;
        }
        SweepChunkStore.Discard(directory, result.Shard);
        return [Path.GetFullPath(table), .. (await plot).Select(Path.GetFullPath)];
    }

    private static string Name(SweepResult result) => result.Provenance.ScenarioName.Length > 0 ? result.Provenance.ScenarioName : "sweep";
}

/// <summary>
/// The chunk files a sweep keeps while it runs (<c>DIR/.chunks/&lt;table&gt;/chunk-&lt;first point&gt;.parquet</c>, each
/// written atomically), so a stopped or killed run keeps every finished chunk and a resumed run reads them back.
/// </summary>
public sealed class SweepChunkStore(string directory) : ISweepStore
{
    /// <summary>Name of the directory (inside the output directory) holding the chunks of unfinished runs.</summary>
    public const string ChunkDirectory = ".chunks";

    private string _chunks = "";
    private SweepDescription? _description;
    private IReadOnlyDictionary<string, string> _metadata = new Dictionary<string, string>();

    /// <summary>The chunk directory of one table.</summary>
    public static string ChunksOf(string directory, SweepShard? shard) =>
        Path.Combine(directory, ChunkDirectory, Path.GetFileNameWithoutExtension(SweepReport.TableName(shard)));

    /// <inheritdoc/>
    public async Task<IReadOnlyList<SweepRow>> StartAsync(Sweep sweep, SweepShard? shard, bool resume, CancellationToken cancel)
    {
        string target = Path.Combine(directory, SweepReport.TableName(shard));
        _chunks = ChunksOf(directory, shard);
        _description = sweep.Description;
        var metadata = sweep.Metadata().ToDictionary();
        if (shard is { } sh) metadata[SweepShard.MetadataKey] = sh.ToString();
        _metadata = metadata;
        string json = sweep.Description.ToJson();
        var kept = new List<SweepRow>();
        if (resume)
        {
            if (File.Exists(target)) kept.AddRange(await Keep(target, json, cancel));
            if (Directory.Exists(_chunks))
                foreach (var file in Directory.GetFiles(_chunks).Where(f => f.EndsWith(".parquet", StringComparison.Ordinal)).Order(StringComparer.Ordinal))
                    kept.AddRange(await Keep(file, json, cancel));
        }
        else if (Directory.Exists(_chunks))
        {
            Directory.Delete(_chunks, recursive: true);
        }
        // Temporary files of a killed run are never complete; only committed chunks count.
        if (Directory.Exists(_chunks))
            foreach (var stale in Directory.GetFiles(_chunks, "*.partial-*")) File.Delete(stale);
        return kept;
    }

    /// <inheritdoc/>
    public Task SaveAsync(IReadOnlyList<SweepRow> rows, CancellationToken cancel)
    {
        var description = _description ?? throw new InvalidOperationException("SaveAsync before StartAsync");
        long first = rows.Min(r => r.Point);
        return SweepTable.WriteAsync(Path.Combine(_chunks, $"chunk-{first:D12}.parquet"), description, rows, _metadata, cancel);
    }

    /// <summary>Deletes the chunks of a table (once the table is written) and the chunk root when it is left empty.</summary>
    public static void Discard(string directory, SweepShard? shard)
    {
        string chunks = ChunksOf(directory, shard);
        if (Directory.Exists(chunks)) Directory.Delete(chunks, recursive: true);
        string root = Path.Combine(directory, ChunkDirectory);
        if (Directory.Exists(root) && !Directory.EnumerateFileSystemEntries(root).Any()) Directory.Delete(root);
    }

    private static async Task<IReadOnlyList<SweepRow>> Keep(string file, string json, CancellationToken cancel)
    {
        var contents = await SweepTable.ReadAsync(file, cancel);
        if (contents.Metadata[Sweep.MetadataKey] != json)
            throw new Core.InputException($"resume: {file} belongs to a different sweep (scenario, seed, grid or metrics differ); start over instead of resuming");
        return contents.Rows;
    }
}

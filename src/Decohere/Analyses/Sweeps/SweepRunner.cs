using System.Globalization;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Analyses.Sweeps;

/// <summary>One of N shards of a sweep: the points K, K + N, K + 2N, … (K from 0 to N − 1).</summary>
public readonly record struct SweepShard(int Index, int Count)
{
    /// <summary>Metadata key of the shard ("K/N") in part files.</summary>
    public const string MetadataKey = "decohere.sweep.shard";

    /// <summary>Parses <c>K/N</c>.</summary>
    /// <exception cref="InputException">Not of the form K/N with 0 ≤ K &lt; N.</exception>
    public static SweepShard Parse(string text)
    {
        string[] parts = text.Split('/');
        if (parts.Length != 2
            || !int.TryParse(parts[0].Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out int k)
            || !int.TryParse(parts[1].Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out int n)
            || n < 1 || k >= n)
            throw new InputException($"--shard '{text}': expected K/N with N ≥ 1 and K from 0 to N − 1 (e.g. 0/8 … 7/8)");
        return new SweepShard(k, n);
    }

    /// <summary>The part file this shard writes.</summary>
    public string FileName => $"part-{Index}-of-{Count}.parquet";

    /// <summary>Number of this shard's points in a grid of <paramref name="points"/>.</summary>
    public long PointsIn(long points) => points <= Index ? 0 : (points - Index + Count - 1) / Count;

    /// <inheritdoc/>
    public override string ToString() => $"{Index}/{Count}";
}

/// <summary>How to run a sweep: which shard, whether to resume, chunking, threads, and progress hooks.</summary>
public sealed record SweepRunOptions
{
    /// <summary>Run one shard and write its part file (null: every point, sweep.parquet).</summary>
    public SweepShard? Shard { get; init; }

    /// <summary>Keep points already written (by an earlier, stopped run of the same sweep) instead of computing them again.</summary>
    public bool Resume { get; init; }

    /// <summary>Points per chunk file (0: automatic, about 20 chunks per run, 32 to 4096 points each).</summary>
    public int ChunkPoints { get; init; }

    /// <summary>Threads (−1: every core).</summary>
    public int MaxDegreeOfParallelism { get; init; } = -1;

    /// <summary>Called once before computing: (points of this run, points already done).</summary>
    public Action<long, long>? OnStart { get; init; }

    /// <summary>Called (from worker threads) after each computed point.</summary>
    public Action? OnPoint { get; init; }
}

/// <summary>What a sweep run did: the file written, its rows, and how many points were computed, kept from before, or failed.</summary>
public sealed record SweepRunResult(string Path, IReadOnlyList<SweepRow> Rows, long Computed, long Resumed, long Failed);

/// <summary>
/// Runs a sweep's points in parallel on the local cores and writes its table. Results go to disk in chunks
/// (<c>DIR/.chunks/&lt;table&gt;/chunk-&lt;first point&gt;.parquet</c>, each written atomically) while the run goes on, so a
/// stopped or killed run keeps every finished chunk; with <see cref="SweepRunOptions.Resume"/> the next run reads them and
/// computes only the rest. The finished table replaces the chunks.
/// </summary>
public static class SweepRunner
{
    /// <summary>Name of the directory (inside the output directory) holding the chunks of unfinished runs.</summary>
    public const string ChunkDirectory = ".chunks";

    /// <summary>Runs the sweep (or one shard of it) and writes DIR/sweep.parquet (or DIR/part-K-of-N.parquet).</summary>
    /// <exception cref="InputException">--resume found files of a different sweep.</exception>
    /// <exception cref="OperationCanceledException">Stopped; finished chunks are kept for --resume, nothing half-written.</exception>
    public static async Task<SweepRunResult> RunAsync(Sweep sweep, string directory, SweepRunOptions options, CancellationToken cancel = default)
    {
        string target = Path.Combine(directory, options.Shard?.FileName ?? "sweep.parquet");
        string chunks = Path.Combine(directory, ChunkDirectory, Path.GetFileNameWithoutExtension(target));
        var metadata = sweep.Metadata().ToDictionary();
        if (options.Shard is { } sh) metadata[SweepShard.MetadataKey] = sh.ToString();
        string json = sweep.Description.ToJson();

        long total = sweep.Grid.PointCount;
        var shard = options.Shard ?? new SweepShard(0, 1);
        long mine = shard.PointsIn(total);
        var done = new Dictionary<long, SweepRow>();
        if (options.Resume)
        {
            if (File.Exists(target)) await Keep(target, json, shard, done, cancel);
            if (Directory.Exists(chunks))
                foreach (var file in Directory.GetFiles(chunks).Where(f => f.EndsWith(".parquet", StringComparison.Ordinal)).Order(StringComparer.Ordinal))
                    await Keep(file, json, shard, done, cancel);
        }
        else if (Directory.Exists(chunks))
        {
            Directory.Delete(chunks, recursive: true);
        }
        // Temporary files of a killed run are never complete; only committed chunks count.
        if (Directory.Exists(chunks))
            foreach (var stale in Directory.GetFiles(chunks, "*.partial-*")) File.Delete(stale);

        long resumed = done.Count;
        var todo = new List<long>();
        for (long p = shard.Index; p < total; p += shard.Count)
            if (!done.ContainsKey(p)) todo.Add(p);
        options.OnStart?.Invoke(mine, resumed);

        int chunkSize = options.ChunkPoints > 0 ? options.ChunkPoints : (int)Math.Clamp((todo.Count + 19) / 20, 32, 4096);
        var parallel = new ParallelOptions { CancellationToken = cancel, MaxDegreeOfParallelism = options.MaxDegreeOfParallelism };
        long computed = 0;
        for (int start = 0; start < todo.Count; start += chunkSize)
        {
            int n = Math.Min(chunkSize, todo.Count - start);
            var rows = new SweepRow[n];
            Parallel.For(0, n, parallel, i =>
            {
                rows[i] = sweep.Evaluate(todo[start + i]);
                options.OnPoint?.Invoke();
            });
            cancel.ThrowIfCancellationRequested();
            // The last chunk goes straight into the table.
            if (start + n < todo.Count)
                await SweepTable.WriteAsync(Path.Combine(chunks, $"chunk-{todo[start]:D12}.parquet"), sweep.Description, rows, metadata, cancel);
            foreach (var row in rows) done[row.Point] = row;
            computed += n;
        }
        cancel.ThrowIfCancellationRequested();
        var all = done.Values.OrderBy(r => r.Point).ToArray();
        await SweepTable.WriteAsync(target, sweep.Description, all, metadata, cancel);
        if (Directory.Exists(chunks)) Directory.Delete(chunks, recursive: true);
        string root = Path.Combine(directory, ChunkDirectory);
        if (Directory.Exists(root) && !Directory.EnumerateFileSystemEntries(root).Any()) Directory.Delete(root);
        return new SweepRunResult(Path.GetFullPath(target), all, computed, resumed, all.LongCount(r => r.Error.Length > 0));
    }

    private static async Task Keep(string file, string json, SweepShard shard, Dictionary<long, SweepRow> done, CancellationToken cancel)
    {
        var contents = await SweepTable.ReadAsync(file, cancel);
        if (contents.Metadata[Sweep.MetadataKey] != json)
            throw new InputException($"--resume: {file} belongs to a different sweep (scenario, seed, grid or metrics differ); run without --resume to start over");
        foreach (var row in contents.Rows)
            if (row.Point % shard.Count == shard.Index) done[row.Point] = row;
    }
}

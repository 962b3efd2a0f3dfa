using System.Collections.Immutable;
using System.Diagnostics;
using System.Globalization;
using Decohere.Core;
using Decohere.Scenarios;

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
            throw new InputException($"shard '{text}': expected K/N with N ≥ 1 and K from 0 to N − 1 (e.g. 0/8 … 7/8)");
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
public sealed record SweepSettings
{
    /// <summary>Run one shard (null: every point).</summary>
    public SweepShard? Shard { get; init; }

    /// <summary>Keep points already finished (by an earlier, stopped run of the same sweep) instead of computing them again.</summary>
    public bool Resume { get; init; }

    /// <summary>
    /// Points per chunk, each handed to the store (0: automatic, chunks of about half a second and the finished points
    /// stored about every <see cref="SweepAnalysis.SaveInterval"/>).
    /// </summary>
    public int ChunkPoints { get; init; }

    /// <summary>Worker threads (−1: every core).</summary>
    public int Threads { get; init; } = -1;

    /// <summary>Called once before computing: (points of this run, points already done).</summary>
    public Action<long, long>? OnStart { get; init; }

    /// <summary>Called (from worker threads) after each computed point.</summary>
    public Action? OnPoint { get; init; }

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (Threads is 0 or < -1) throw new InputException($"threads: {Threads}: must be at least 1");
        if (ChunkPoints < 0) throw new InputException($"chunk points: {ChunkPoints}: must be ≥ 0 (0: automatic)");
    }
}

/// <summary>
/// Where a sweep keeps its finished points while it runs, so that a stopped or killed run loses at most one chunk and a
/// later run can resume. The analysis only hands rows over; the store (chunk files, in <c>Reports</c>) decides how
/// they are kept.
/// </summary>
public interface ISweepStore
{
    /// <summary>
    /// Starts a run of <paramref name="sweep"/> (one shard of it): with <paramref name="resume"/>, returns the rows an
    /// earlier run of the same sweep finished; without, forgets them and returns none.
    /// </summary>
    /// <exception cref="InputException">Kept rows belong to a different sweep.</exception>
    Task<IReadOnlyList<SweepRow>> StartAsync(Sweep sweep, SweepShard? shard, bool resume, CancellationToken cancel);

    /// <summary>Keeps one finished chunk of rows.</summary>
    Task SaveAsync(IReadOnlyList<SweepRow> rows, CancellationToken cancel);
}

/// <summary>
/// What a sweep (or a merge of its shards) produced: its description, its rows sorted by point, how many points were
/// computed or kept from an earlier run, and the provenance of the template scenario.
/// </summary>
public sealed record SweepResult(
    SweepDescription Description,
    SweepShard? Shard,
    IReadOnlyList<SweepRow> Rows,
    long Computed,
    long Resumed,
    Provenance Provenance,
    ResultStatus Status,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult
{
    /// <summary>Points whose metrics could not all be evaluated (null values, reason in the error text).</summary>
    public long Failed => Rows.LongCount(r => r.Error.Length > 0);

    /// <summary>Footer metadata of the table: provenance, the description and, for a shard, its K/N.</summary>
    public IReadOnlyDictionary<string, string> Metadata()
    {
        var kv = Provenance.ToKeyValues().ToDictionary();
        kv[Sweep.MetadataKey] = Description.ToJson();
        if (Shard is { } shard) kv[SweepShard.MetadataKey] = shard.ToString();
        return kv;
    }

    /// <summary>Status and warnings for a set of rows: a failed point makes the result partial.</summary>
    internal static (ResultStatus Status, ImmutableArray<string> Warnings) Judge(IReadOnlyList<SweepRow> rows)
    {
        var failed = rows.Where(r => r.Error.Length > 0).ToArray();
        if (failed.Length == 0) return (ResultStatus.Success, []);
        return (ResultStatus.PartialFailure,
            [$"{failed.Length} point(s) failed and have nulls in the metric columns; see the error column (point {failed[0].Point}: {failed[0].Error})"]);
    }
}

/// <summary>
/// Runs a sweep's points in parallel on the local cores. Finished points go to the store while the run goes on (with
/// automatic chunks about every <see cref="SaveInterval"/>), so a stopped or killed run keeps all but its last few
/// seconds of work; with <see cref="SweepSettings.Resume"/> the next run takes them back and computes only the rest.
/// </summary>
public static class SweepAnalysis
{
    /// <summary>How much finished work a stopped run may lose, at most, with automatic chunks.</summary>
    public static readonly TimeSpan SaveInterval = TimeSpan.FromSeconds(2);

    private const int FirstChunkPoints = 64;
    private const int MaxChunkPoints = 1 << 20;

    /// <summary>Evaluates the sweep (or one shard of it).</summary>
    /// <exception cref="InputException">A setting is out of range, or resumed rows belong to a different sweep.</exception>
    /// <exception cref="OperationCanceledException">Stopped; chunks already stored are kept for a resume.</exception>
    public static async Task<SweepResult> SolveAsync(Sweep sweep, SweepSettings settings, ISweepStore? store = null, CancellationToken cancel = default)
    {
        settings.Validate();
        long started = Stopwatch.GetTimestamp();
        long total = sweep.Grid.PointCount;
        var shard = settings.Shard ?? new SweepShard(0, 1);
        long mine = shard.PointsIn(total);
        var done = new Dictionary<long, SweepRow>();
        if (store is not null)
            foreach (var row in await store.StartAsync(sweep, settings.Shard, settings.Resume, cancel))
                if (row.Point % shard.Count == shard.Index) done[row.Point] = row;

        long resumed = done.Count;
        var todo = new List<long>();
        for (long p = shard.Index; p < total; p += shard.Count)
            if (!done.ContainsKey(p)) todo.Add(p);
        settings.OnStart?.Invoke(mine, resumed);

        // Automatic chunks are sized to a fraction of SaveInterval once the first has been timed, and a store keeps the
        // finished points about every SaveInterval: a stop loses at most that much work, and a short sweep keeps nothing.
        bool automatic = settings.ChunkPoints == 0;
        int chunkSize = automatic ? Math.Min(todo.Count, FirstChunkPoints) : settings.ChunkPoints;
        var parallel = new ParallelOptions { CancellationToken = cancel, MaxDegreeOfParallelism = settings.Threads };
        var pending = new List<SweepRow>();
        long saved = Stopwatch.GetTimestamp();
        long computed = 0;
        try
        {
            for (int start = 0, n; start < todo.Count; start += n)
            {
                long chunkStarted = Stopwatch.GetTimestamp();
                n = Math.Min(chunkSize, todo.Count - start);
                var rows = new SweepRow[n];
                Parallel.For(0, n, parallel, i =>
                {
                    rows[i] = sweep.Evaluate(todo[start + i]);
                    settings.OnPoint?.Invoke();
                });
                cancel.ThrowIfCancellationRequested();
                foreach (var row in rows) done[row.Point] = row;
                computed += n;
                // The last chunk goes straight into the table the report writes.
                bool last = start + n >= todo.Count;
                if (store is not null && !last)
                {
                    pending.AddRange(rows);
                    if (!automatic || Stopwatch.GetElapsedTime(saved) >= SaveInterval)
                    {
                        await store.SaveAsync(pending, cancel);
                        pending = [];
                        saved = Stopwatch.GetTimestamp();
                    }
                }
                if (automatic)
                {
                    double perPoint = Stopwatch.GetElapsedTime(chunkStarted).TotalSeconds / n;
                    chunkSize = (int)Math.Clamp(SaveInterval.TotalSeconds / 4 / Math.Max(perPoint, 1e-9), FirstChunkPoints, MaxChunkPoints);
                }
            }
        }
        catch (OperationCanceledException) when (store is not null && pending.Count > 0)
        {
            await store.SaveAsync(pending, CancellationToken.None);
            throw;
        }
        cancel.ThrowIfCancellationRequested();
        var all = done.Values.OrderBy(r => r.Point).ToArray();
        var (status, warnings) = SweepResult.Judge(all);
        return new SweepResult(sweep.Description, settings.Shard, all, computed, resumed, Provenance.For(sweep.Template), status, warnings,
            WorkStatistics.Since(started, computed));
    }
}

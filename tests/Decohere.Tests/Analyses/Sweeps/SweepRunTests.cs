using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.Reports;
using Decohere.Scenarios;
using Decohere.Tests.Cli;
using Decohere.Tests.Reports;

namespace Decohere.Tests.Analyses.Sweeps;

/// <summary>Shards, merge and resume, with the tables read back by DuckDB (an independent Parquet reader).</summary>
public class SweepRunTests
{
    private static readonly string[] Vary =
        ["--vary", "stages.squeeze.tones[1].coupling=10kHz:26kHz:4", "--vary", "modes.drum.bath.temperature=5mK,15mK,50mK"];

    private static List<object?[]> Query(string sql) => DuckDb.Query(sql);

    private static List<object?[]> Table(string path) => Query($"SELECT * FROM read_parquet('{path.Replace("'", "''")}') ORDER BY point");

    private static Dictionary<string, string> Metadata(string path) =>
        Query($"SELECT decode(key), decode(value) FROM parquet_kv_metadata('{path.Replace("'", "''")}')").ToDictionary(r => (string)r[0]!, r => (string)r[1]!);

    [Fact]
    public async Task ThreeShardProcessesMergeToTheUnshardedTable()
    {
        string dir = TestPaths.NewTempDirectory(), parts = Path.Combine(dir, "parts"), whole = Path.Combine(dir, "whole");
        string[] metrics = ["--metrics", "steady_squeezing_db:squeeze,max_re_lambda:squeeze,end_occupancy:release,resolution_probability", "-q"];
        var runs = Enumerable.Range(0, 3)
            .Select(k => Task.Run(() => CliProcess.Run(dir, ["sweep", .. Vary, .. metrics, "--shard", $"{k}/3", "--out", parts])))
            .Append(Task.Run(() => CliProcess.Run(dir, ["sweep", .. Vary, .. metrics, "--out", whole, "--threads", "1"])))
            .ToArray();
        foreach (var r in await Task.WhenAll(runs)) Assert.True(r.ExitCode == 0, r.Stderr);

        var merge = CliProcess.Run(dir, "merge", parts);
        Assert.True(merge.ExitCode == 0, merge.Stderr);
        string merged = Path.Combine(parts, "sweep.parquet"), single = Path.Combine(whole, "sweep.parquet");
        Assert.True(File.Exists(Path.Combine(parts, "sweep.png")));
        Assert.True(File.Exists(Path.Combine(whole, "sweep.png")));

        var columns = Query($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet('{single}'))");
        Assert.Equal(["point", "seed", "stages.squeeze.tones[1].coupling_hz", "modes.drum.bath.temperature_k",
            "steady_squeezing_db.squeeze", "max_re_lambda_per_s.squeeze", "end_occupancy.release", "resolution_probability.delay_0.008_s", "error"],
            columns.Select(c => (string)c[0]!).ToArray());
        Assert.Equal(["BIGINT", "BIGINT", "DOUBLE", "DOUBLE", "DOUBLE", "DOUBLE", "DOUBLE", "DOUBLE", "VARCHAR"], columns.Select(c => (string)c[1]!).ToArray());

        var a = Table(single);
        var b = Table(merged);
        Assert.Equal(12, a.Count);
        Assert.Equal(Enumerable.Range(0, 12).Select(i => (long)i), a.Select(r => (long)r[0]!));
        for (int i = 0; i < a.Count; i++) Assert.Equal(a[i], b[i]); // value for value, nulls included
        // G₊ = 26 kHz > G₋ = 25 kHz (points 9–11) has no steady state: recorded, not fatal.
        Assert.All(a.Skip(9), r => { Assert.Null(r[4]); Assert.Contains("no steady state", (string)r[8]!); });
        Assert.All(a.Take(9), r => Assert.Equal("", r[8]));
        // Seeds come from (scenario seed, point) only.
        Assert.All(a, r => Assert.Equal(Seeds.DeriveSeed(20261201, SeedStream.SweepPoint, (long)r[0]!), (long)r[1]!));

        var ma = Metadata(single);
        Assert.Equal(ma, Metadata(merged));
        Assert.Equal(ScenarioLoader.Demo().SourceHash, ma["decohere.scenario_sha256"]);
        Assert.Equal(12, SweepDescription.FromJson(ma[Sweep.MetadataKey], "test").Points);
        Assert.Equal("1/3", Metadata(Path.Combine(parts, "part-1-of-3.parquet"))[SweepShard.MetadataKey]);

        // A missing part names its points and shard; a duplicated one names the repeats; both exit with 2.
        File.Move(Path.Combine(parts, "part-1-of-3.parquet"), Path.Combine(dir, "aside.parquet"));
        var missing = CliProcess.Run(dir, "merge", parts);
        Assert.Equal(2, missing.ExitCode);
        Assert.Contains("4 missing: 1, 4, 7, 10 (run or rerun shard 1/3)", missing.Stderr);
        File.Move(Path.Combine(dir, "aside.parquet"), Path.Combine(parts, "part-1-of-3.parquet"));
        File.Copy(Path.Combine(parts, "part-2-of-3.parquet"), Path.Combine(parts, "part-0-of-1.parquet"));
        var repeated = CliProcess.Run(dir, "merge", parts);
        Assert.Equal(2, repeated.ExitCode);
        Assert.Contains("4 duplicated: 2, 5, 8, 11", repeated.Stderr);
        Assert.Empty(Directory.GetFiles(parts, "*.partial-*"));
    }

    [Fact]
    public async Task MergeRefusesPartsOfDifferentSweeps()
    {
        var demo = ScenarioLoader.Demo();
        string dir = TestPaths.NewTempDirectory();
        var first = Sweep.Parse(demo, ["readout.added_noise=0.5,1"], false, "max_re_lambda");
        var other = Sweep.Parse(demo, ["readout.added_noise=0.5,2"], false, "max_re_lambda");
        await WriteThrough.SweepAsync(first, dir, new SweepSettings { Shard = new SweepShard(0, 2) });
        await WriteThrough.SweepAsync(other, dir, new SweepSettings { Shard = new SweepShard(1, 2) });
        var e = await Assert.ThrowsAsync<InputException>(() => WriteThrough.MergeAsync(dir));
        Assert.Contains("part-1-of-2.parquet belongs to a different sweep", e.Message);
    }

    [Fact]
    public async Task AStoppedRunWithAutomaticChunksKeepsThePointsFinishedBeforeTheStop()
    {
        var sweep = Sweep.Parse(ScenarioLoader.Demo(), ["modes.drum.bath.temperature=1mK:60mK:10", "readout.added_noise=0.5:2:10"], false,
            "steady_var_min,thermal_decoherence_rate");
        string dir = TestPaths.NewTempDirectory();
        using var stop = new CancellationTokenSource();
        int seen = 0;
        var first = new SweepSettings { Threads = 1, OnPoint = () => { if (Interlocked.Increment(ref seen) == 80) stop.Cancel(); } };
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => WriteThrough.SweepAsync(sweep, dir, first, stop.Token));
        // The first chunk (64 points) finished well within the save interval, so it was kept only when the run stopped;
        // the second, stopped at its 16th point, was not.
        string chunks = Path.Combine(dir, SweepChunkStore.ChunkDirectory, "sweep");
        Assert.Equal(64L, Convert.ToInt64(Query($"SELECT count(*) FROM read_parquet('{chunks}/*.parquet')")[0][0]));
        var resumed = await WriteThrough.SweepAsync(sweep, dir, new SweepSettings { Resume = true });
        Assert.Equal(64, resumed.Resumed);
        Assert.Equal(36, resumed.Computed);
    }

    [Fact]
    public async Task ResumeAfterAStoppedRunComputesOnlyTheRest()
    {
        var demo = ScenarioLoader.Demo();
        var sweep = Sweep.Parse(demo, ["modes.drum.bath.temperature=1mK:60mK:6", "readout.added_noise=0.5:2:5"], false,
            "steady_var_min,thermal_decoherence_rate");
        string dir = TestPaths.NewTempDirectory(), fresh = TestPaths.NewTempDirectory();
        using var stop = new CancellationTokenSource();
        int seen = 0;
        var first = new SweepSettings
        {
            ChunkPoints = 4,
            Threads = 1,
            OnPoint = () => { if (Interlocked.Increment(ref seen) == 14) stop.Cancel(); },
        };
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => WriteThrough.SweepAsync(sweep, dir, first, stop.Token));
        string chunks = Path.Combine(dir, SweepChunkStore.ChunkDirectory, "sweep");
        Assert.False(File.Exists(Path.Combine(dir, "sweep.parquet")));
        Assert.Empty(Directory.GetFiles(chunks, "*.partial-*"));
        // Three chunks of four were finished before the stop at the 14th point; the fourth was never written.
        long kept = Convert.ToInt64(Query($"SELECT count(*) FROM read_parquet('{chunks}/*.parquet')")[0][0]);
        Assert.Equal(12, kept);

        int computed = 0;
        var second = new SweepSettings { Resume = true, OnPoint = () => Interlocked.Increment(ref computed) };
        var resumed = await WriteThrough.SweepAsync(sweep, dir, second);
        Assert.Equal(30 - kept, resumed.Computed);
        Assert.Equal(30 - kept, computed);
        Assert.Equal(kept, resumed.Resumed);
        Assert.False(Directory.Exists(Path.Combine(dir, SweepChunkStore.ChunkDirectory)));

        await WriteThrough.SweepAsync(sweep, fresh);
        var a = Table(Path.Combine(dir, "sweep.parquet"));
        var b = Table(Path.Combine(fresh, "sweep.parquet"));
        Assert.Equal(30, a.Count);
        for (int i = 0; i < a.Count; i++) Assert.Equal(b[i], a[i]);

        // Resuming a finished table recomputes nothing; resuming with another grid is refused.
        var again = await WriteThrough.SweepAsync(sweep, dir, second);
        Assert.Equal(0, again.Computed);
        var changed = Sweep.Parse(demo, ["modes.drum.bath.temperature=1mK:60mK:7", "readout.added_noise=0.5:2:5"], false, "steady_var_min,thermal_decoherence_rate");
        var e = await Assert.ThrowsAsync<InputException>(() => WriteThrough.SweepAsync(changed, dir, second));
        Assert.Contains("belongs to a different sweep", e.Message);
    }

    [Fact]
    public void BadCommandLinesExitTwo()
    {
        string dir = TestPaths.NewTempDirectory();
        var bad = CliProcess.Run(dir, "sweep", "--vary", "modes.drum.bath.temperature=5mK:50mK", "--out", Path.Combine(dir, "o"));
        Assert.Equal(2, bad.ExitCode);
        Assert.Contains("modes.drum.bath.temperature", bad.Stderr);
        var shard = CliProcess.Run(dir, "sweep", "--vary", "readout.added_noise=1,2", "--shard", "3/3", "--out", Path.Combine(dir, "o"));
        Assert.Equal(2, shard.ExitCode);
        Assert.Contains("K/N", shard.Stderr);
        var merge = CliProcess.Run(dir, "merge", dir);
        Assert.Equal(2, merge.ExitCode);
        Assert.Contains("no part files", merge.Stderr);
        Assert.False(Directory.Exists(Path.Combine(dir, "o")));
    }
}

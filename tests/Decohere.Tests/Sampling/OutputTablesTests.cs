using System.Globalization;
using Decohere.Scenarios;

namespace Decohere.Tests.Sampling;

public class OutputTablesTests
{
    private static List<object[]> Query(string sql) => [.. DuckDb.Query(sql).Select(row => row.Select(v => v ?? DBNull.Value).ToArray())];

    [Fact]
    public async Task DemoRunWritesTablesThatAnIndependentReaderAgreesWith()
    {
        // Reader: DuckDB's Parquet reader (independent of Parquet.Net). Checks columns, row counts, that var_samp(i) in
        // shots.parquet equals var_i in estimates.parquet, the seed in the footer, and |z| < 5 for every estimate.
        var dir = Directory.CreateTempSubdirectory("decohere-run-");
        try
        {
            var scenario = ScenarioLoader.Demo();
            var output = await Decohere.Tests.Reports.WriteThrough.RunAsync(scenario, dir.FullName, new Decohere.Analyses.Runs.RunSettings(Trajectories: 20));
            string shots = Path.Combine(dir.FullName, "shots.parquet"), estimates = Path.Combine(dir.FullName, "estimates.parquet");
            string trajectories = Path.Combine(dir.FullName, "trajectories.parquet");
            Assert.Contains(shots, output.Paths);
            Assert.True(File.Exists(Path.Combine(dir.FullName, "estimates.png")));
            var columns = Query($"SELECT column_name FROM (DESCRIBE SELECT * FROM '{shots}')").Select(r => (string)r[0]).ToArray();
            Assert.Equal(["shot", "delay_s", "time_s", "mode", "i", "q", "x", "p"], columns);
            int delays = scenario.Readout!.DelaysS.Length, n = scenario.Readout.Shots;
            Assert.Equal((long)delays * n, Convert.ToInt64(Query($"SELECT count(*) FROM '{shots}'")[0][0]));
            var perDelay = Query($"SELECT delay_s, var_samp(i), count(*), min(shot), max(shot) FROM '{shots}' GROUP BY delay_s ORDER BY delay_s");
            var est = Query($"SELECT delay_s, var_i, shots, var_min_z, var_x_z, var_p_z, squeezing_db_z, occupancy_z FROM '{estimates}' ORDER BY delay_s");
            Assert.Equal(delays, est.Count);
            for (int k = 0; k < delays; k++)
            {
                Assert.Equal((double)perDelay[k][0], (double)est[k][0]);
                Assert.Equal((double)perDelay[k][1], (double)est[k][1], 1e-10);
                Assert.Equal(n, Convert.ToInt64(perDelay[k][2]));
                Assert.Equal(0L, Convert.ToInt64(perDelay[k][3]));
                for (int c = 3; c < 8; c++) Assert.True(Math.Abs((double)est[k][c]) < 5, $"delay {est[k][0]}: z = {est[k][c]}");
            }
            var seed = Query($"SELECT decode(value) FROM parquet_kv_metadata('{shots}') WHERE decode(key) = 'decohere.seed'");
            Assert.Equal(scenario.Seed.ToString(CultureInfo.InvariantCulture), (string)seed[0][0]);
            var traj = Query($"SELECT count(DISTINCT trajectory), count(*), min(mode), max(mode) FROM '{trajectories}'");
            Assert.Equal(20L, Convert.ToInt64(traj[0][0]));
            Assert.Equal("drum", (string)traj[0][2]);
            Assert.Equal("drum", (string)traj[0][3]);
            Assert.Contains("\"seed\": " + scenario.Seed, await File.ReadAllTextAsync(Path.Combine(dir.FullName, "summary.json")));
        }
        finally { dir.Delete(recursive: true); }
    }

    [Fact]
    public async Task ACancelledRunLeavesNoPartialFiles()
    {
        // Common practice (atomic output): a cancelled run leaves no file with a partial or temporary name.
        var dir = Directory.CreateTempSubdirectory("decohere-cancel-");
        try
        {
            using var cancel = new CancellationTokenSource();
            var scenario = ScenarioLoader.Demo();
            var task = Decohere.Tests.Reports.WriteThrough.RunAsync(scenario with { Readout = scenario.Readout! with { Shots = 3_000_000 } }, dir.FullName,
                new Decohere.Analyses.Runs.RunSettings(Sampler: new Decohere.Sampling.SamplerSettings(BatchShots: 1 << 16)), cancel: cancel.Token);
            cancel.CancelAfter(TimeSpan.FromMilliseconds(300));
            await Assert.ThrowsAnyAsync<OperationCanceledException>(() => task);
            Assert.Empty(Directory.GetFiles(dir.FullName, "*partial*"));
            Assert.False(File.Exists(Path.Combine(dir.FullName, "shots.parquet")));
        }
        finally { dir.Delete(recursive: true); }
    }
}

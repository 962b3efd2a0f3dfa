using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Tests.Reports;

/// <summary>Our Parquet files read back by DuckDB, an independent Parquet implementation.</summary>
public class CovarianceTableTests
{
    private static List<object?[]> Query(string sql) => DuckDb.Query(sql);

    [Fact]
    public async Task SchemaValuesAndMetadataReadBackThroughDuckDb()
    {
        var scenario = ScenarioLoader.Demo() with { OutputStepS = 100e-6 };
        var dynamics = Dynamics.Solve(scenario);
        var evolution = Evolution.Run(dynamics);
        string dir = TestPaths.NewTempDirectory();
        string path = Path.Combine(dir, "covariance.parquet");
        await CovarianceTable.WriteAsync(evolution, path, Provenance.For(scenario));
        string file = path.Replace("'", "''");

        var schema = Query($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet('{file}'))");
        Assert.Equal(["time_s", "stage", "mode", "var_x", "var_p", "cov_xp", "var_min", "var_max", "angle_rad", "occupancy", "squeezing_db"],
            schema.Select(r => (string)r[0]!).ToArray());
        Assert.Equal("VARCHAR", schema[1][1]);
        Assert.All(schema.Where(r => (string)r[0]! is not ("stage" or "mode")), r => Assert.Equal("DOUBLE", r[1]));

        // 11 ms at 100 µs: 111 grid times (0 … 11 ms; the stage ends at 1 ms and 3 ms fall on the grid), two modes each.
        var count = Query($"SELECT count(*), count(DISTINCT time_s) FROM read_parquet('{file}')");
        Assert.Equal(2L * evolution.Times.Length, Convert.ToInt64(count[0][0]));
        Assert.Equal(111L, Convert.ToInt64(count[0][1]));

        // A row read by DuckDB equals the engine's state at that time, and the derived columns follow the conventions.
        var row = Query($"SELECT var_x, var_p, cov_xp, var_min, squeezing_db, stage FROM read_parquet('{file}') WHERE mode = 'drum' AND abs(time_s - 0.003) < 1e-12")[0];
        var m = dynamics.StateAt(3e-3).Moments("drum");
        Assert.Equal(m.VarX, (double)row[0]!, 12);
        Assert.Equal(m.VarP, (double)row[1]!, 12);
        Assert.Equal(10 * Math.Log10(0.5 / (double)row[3]!), (double)row[4]!, 12);
        Assert.Equal("squeeze", row[5]);

        var meta = Query($"SELECT decode(key), decode(value) FROM parquet_kv_metadata('{file}')").ToDictionary(r => (string)r[0]!, r => (string)r[1]!);
        Assert.Equal(scenario.SourceHash, meta["decohere.scenario_sha256"]);
        Assert.Equal(scenario.SourceText, meta["decohere.scenario"]);
        Assert.Equal("20261201", meta["decohere.seed"]);
        Assert.Contains("zero-point variance 0.5", meta["decohere.conventions"]);
        Assert.Empty(Directory.GetFiles(dir, "*.partial-*"));
    }

    [Fact]
    public async Task AFailedWriteLeavesNoFile()
    {
        string dir = TestPaths.NewTempDirectory();
        string path = Path.Combine(dir, "t.parquet");
        await Assert.ThrowsAsync<ArgumentException>(async () =>
        {
            await using var table = await ParquetTable.CreateAsync(path, [ColumnSpec.Double("x")], new Dictionary<string, string>());
            await table.WriteRowGroupAsync(1, [new double[] { 1 }, new double[] { 2 }]);
        });
        Assert.Empty(Directory.GetFiles(dir));
    }
}

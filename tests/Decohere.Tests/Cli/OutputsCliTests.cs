namespace Decohere.Tests.Cli;

/// <summary>The outputs a group takes into a notebook: check without a scenario, CSV copies, plots as PNG and SVG.</summary>
public class OutputsCliTests
{
    [Fact]
    public void CheckWithoutAScenarioChecksTheDemo()
    {
        var result = CliProcess.Run(TestPaths.NewTempDirectory(), "check");
        Assert.Equal(0, result.ExitCode);
        Assert.Contains("demo-drum", result.Stdout);
    }

    [Fact]
    public void LifetimeWritesCsvBesideParquetAndPlotsAsPngAndSvg()
    {
        string dir = TestPaths.NewTempDirectory();
        var result = CliProcess.Run(dir, "lifetime", "--out", "out", "--format", "parquet,csv", "--quiet");
        Assert.Equal(0, result.ExitCode);
        string out_ = Path.Combine(dir, "out");
        foreach (var f in new[] { "lifetime.parquet", "lifetime.csv", "lifetime.png", "lifetime.svg" }) Assert.True(File.Exists(Path.Combine(out_, f)), f);
        Assert.StartsWith("delay_s,var_min,squeezing_db,power", File.ReadLines(Path.Combine(out_, "lifetime.csv")).First());
        Assert.Contains("lifetime.csv", File.ReadAllText(Path.Combine(out_, "decohere-manifest.json")));
        // DuckDB reads both: the same number of rows and the same delays.
        var parquet = DuckDb.Query($"SELECT count(*), sum(delay_s) FROM read_parquet({DuckDb.Literal(Path.Combine(out_, "lifetime.parquet"))})")[0];
        var csv = DuckDb.Query($"SELECT count(*), sum(delay_s) FROM read_csv({DuckDb.Literal(Path.Combine(out_, "lifetime.csv"))}, header = true)")[0];
        Assert.Equal(parquet, csv);

        // Without csv the stale copy goes: the command owns the names it may write.
        Assert.Equal(0, CliProcess.Run(dir, "lifetime", "--out", "out", "--quiet").ExitCode);
        Assert.False(File.Exists(Path.Combine(out_, "lifetime.csv")));
        var bad = CliProcess.Run(dir, "lifetime", "--format", "xlsx");
        Assert.Equal(2, bad.ExitCode);
        Assert.Contains("--format: 'xlsx'", bad.Stderr);
    }
}

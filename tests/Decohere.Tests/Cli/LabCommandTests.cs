using System.CommandLine;
using System.Text.Json.Nodes;
using Decohere.Cli.Commands;

using Commands = Decohere.Cli.Commands;

namespace Decohere.Tests.Cli;

/// <summary>End-to-end runs of <c>spectrum</c>, <c>cooling</c> and <c>ringdown</c>: files written, bad input named with its option.</summary>
public sealed class LabCommandTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "decohere-lab-" + Guid.NewGuid().ToString("N"));
    private readonly StringWriter _out = new(), _err = new();
    private readonly AppConsole _console;

    public LabCommandTests() => _console = AppConsole.Capture(_out, _err);

    public void Dispose()
    {
        if (Directory.Exists(_dir)) Directory.Delete(_dir, true);
    }

    private Task<int> Invoke(params string[] args)
    {
        var root = new RootCommand("test") { SpectrumCommand.Create(_console), CoolingCommand.Create(_console), RingdownCommand.Create(_console) };
        return Commands.Cli.InvokeAsync(root, args, _console);
    }

    private static string Scenario(string name) => Path.Combine(TestPaths.RepositoryRoot, "scenarios", name);

    [Fact]
    public async Task ASpectrumWithCsvWritesTheSameTableTwiceAndItsPlotAsPngAndSvg()
    {
        Assert.Equal(0, await Invoke("spectrum", Scenario("demo.yaml"), "--stage", "squeeze", "--points", "50", "--out", _dir, "--format", "parquet,csv", "--quiet"));
        foreach (var f in new[] { "spectrum.parquet", "spectrum.csv", "spectrum.json", "spectrum.png", "spectrum.svg" })
            Assert.True(File.Exists(Path.Combine(_dir, f)), f);
        // DuckDB, an independent reader, finds the same rows and the same integral in both files.
        string sql = "SELECT count(*), sum(s_xx) FROM ";
        var parquet = DuckDb.Query(sql + $"read_parquet({DuckDb.Literal(Path.Combine(_dir, "spectrum.parquet"))})")[0];
        var csv = DuckDb.Query(sql + $"read_csv({DuckDb.Literal(Path.Combine(_dir, "spectrum.csv"))}, header = true)")[0];
        Assert.Equal(parquet[0], csv[0]);
        Assert.Equal(Convert.ToDouble(parquet[1]), Convert.ToDouble(csv[1]), 12);
    }

    [Fact]
    public async Task CoolingOnTheExampleWritesItsFilesAndFindsAMinimum()
    {
        Assert.Equal(0, await Invoke("cooling", Scenario("drum-cooling.yaml"), "--cooperativity", "1:1e5:21:log", "--out", _dir, "--quiet"));
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(_dir, "cooling.json")))!;
        Assert.False(json["minimum_at_range_edge"]!.GetValue<bool>());
        Assert.True(File.Exists(Path.Combine(_dir, "cooling.png")));
        var rows = DuckDb.Query($"SELECT count(*), min(occupancy) FROM read_parquet({DuckDb.Literal(Path.Combine(_dir, "cooling.parquet"))})");
        Assert.Equal(21L, Convert.ToInt64(rows[0][0]));
        // The refined minimum lies at or below every grid point.
        Assert.True(json["minimum"]!["occupancy"]!.GetValue<double>() <= Convert.ToDouble(rows[0][1]) * (1 + 1e-12));
    }

    [Theory]
    [InlineData("spectrum", "--stage", "nope", "--stage")]
    [InlineData("cooling", "--cooperativity", "1:0:5:log", "--cooperativity")]
    [InlineData("cooling", "--phase-noise", "-150", "--g0")]
    public async Task BadOptionsExitTwoAndNameTheOption(string command, string option, string value, string named)
    {
        Assert.Equal(2, await Invoke(command, Scenario("drum-cooling.yaml"), option, value, "--out", _dir));
        Assert.Contains(named, _err.ToString());
    }

    [Fact]
    public async Task RingdownRefusesAFileWithoutItsColumns()
    {
        Directory.CreateDirectory(_dir);
        string path = Path.Combine(_dir, "ring.csv");
        File.WriteAllText(path, "t,amplitude\n0,1\n1,0.5\n");
        Assert.Equal(2, await Invoke("ringdown", "--data", path, "--out", _dir));
        Assert.Contains("time_s", _err.ToString());
    }
}

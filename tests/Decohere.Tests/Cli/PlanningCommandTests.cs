using System.CommandLine;
using System.Text.Json.Nodes;
using Decohere.Cli.Commands;

using Commands = Decohere.Cli.Commands;

namespace Decohere.Tests.Cli;

/// <summary>End-to-end runs of <c>decohere lifetime</c> and <c>decohere tolerance</c> on the built-in demo.</summary>
public sealed class PlanningCommandTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "decohere-planning-" + Guid.NewGuid().ToString("N"));
    private readonly StringWriter _out = new(), _err = new();
    private readonly AppConsole _console;

    public PlanningCommandTests() => _console = AppConsole.Capture(_out, _err);

    public void Dispose()
    {
        if (Directory.Exists(_dir)) Directory.Delete(_dir, true);
    }

    private Task<int> Invoke(params string[] args)
    {
        var root = new RootCommand("test") { LifetimeCommand.Create(_console), ToleranceCommand.Create(_console) };
        return Commands.Cli.InvokeAsync(root, args, _console);
    }

    private static List<object?[]> Query(string sql) => DuckDb.Query(sql);

    [Fact]
    public async Task Lifetime_OnDemo_WritesConsistentFiles()
    {
        Assert.Equal(0, await Invoke("lifetime", "--out", _dir, "--quiet"));
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(_dir, "lifetime.json")))!;
        double physical = json["physical_lifetime_s"]!.GetValue<double>();
        double observable = json["observable_lifetime_s"]!.GetValue<double>();
        Assert.NotNull(json["approximate_lifetime_s"]);
        Assert.NotNull(json["ratio"]);
        Assert.Equal(4, json["sensitivities"]!.AsArray().Count);
        Assert.Equal("demo-drum", json["scenario"]!.GetValue<string>());
        Assert.True(observable > 0 && observable < physical);
        Assert.True(new FileInfo(Path.Combine(_dir, "lifetime.png")).Length > 1000);

        // Read back with DuckDB (an independent Parquet reader): var_min crosses ½ between the table rows around the
        // physical lifetime, the power crosses ½ around the observable one (a row may fall on a lifetime itself, hence
        // the 1e-6 margins), and squeezing_db = 10·log10(½/var_min) (PHYSICS.md).
        string file = Path.Combine(_dir, "lifetime.parquet").Replace("'", "''");
        var rows = Query($"SELECT delay_s, var_min, squeezing_db, power FROM read_parquet('{file}') ORDER BY delay_s");
        Assert.True(rows.Count > 100);
        foreach (var r in rows) Assert.Equal(10 * Math.Log10(0.5 / (double)r[1]!), (double)r[2]!, 1e-9);
        var before = rows.Last(r => (double)r[0]! < physical * (1 - 1e-6));
        var after = rows.First(r => (double)r[0]! > physical * (1 + 1e-6));
        Assert.True((double)before[1]! < 0.5 && (double)after[1]! > 0.5, $"{before[0]} {before[1]} | {after[0]} {after[1]} | {physical}");
        var pBefore = rows.Last(r => (double)r[0]! < observable * (1 - 1e-6));
        var pAfter = rows.First(r => (double)r[0]! > observable * (1 + 1e-6));
        Assert.True((double)pBefore[3]! > 0.5 && (double)pAfter[3]! < 0.5);
    }

    [Fact]
    public async Task Tolerance_OnDemo_WritesGridWithMonteCarloColumns()
    {
        Assert.Equal(0, await Invoke("tolerance", "--added-noise", "0:2:+0.5", "--shots", "200,2000", "--delay", "2 ms",
            "--calibration-uncertainty", "0.05", "--draws", "500", "--out", _dir));
        Assert.Contains("largest added noise", _out.ToString());
        string file = Path.Combine(_dir, "tolerance.parquet").Replace("'", "''");
        var rows = Query($"SELECT added_noise, shots, power, power_mc, power_mc_err FROM read_parquet('{file}')");
        Assert.Equal(5 * 2, rows.Count);
        Assert.All(rows, r => Assert.NotNull(r[3]));
        Assert.All(rows, r => Assert.InRange((double)r[2]!, 0.0, 1.0));
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(_dir, "tolerance.json")))!;
        Assert.Equal(2, json["largest_added_noise"]!.AsArray().Count);
        Assert.Equal(5, json["fewest_shots"]!.AsArray().Count);
        Assert.True(File.Exists(Path.Combine(_dir, "tolerance.png")));

        // Without --calibration-uncertainty the Monte Carlo columns are null.
        string dir2 = Path.Combine(_dir, "plain");
        Assert.Equal(0, await Invoke("tolerance", "--added-noise", "1", "--shots", "500", "--out", dir2, "-q"));
        var plain = Query($"SELECT power_mc, power_mc_err FROM read_parquet('{Path.Combine(dir2, "tolerance.parquet").Replace("'", "''")}')");
        Assert.All(plain, r => Assert.True(r[0] is null && r[1] is null));
    }

    [Theory]
    [InlineData("--added-noise", "tolerance", "--added-noise", "3:0:+0.5", "--shots", "100")]
    [InlineData("--added-noise", "tolerance", "--added-noise", "a:b", "--shots", "100")]
    [InlineData("FROM:TO:+STEP", "tolerance", "--added-noise", "0:3:0.25", "--shots", "100")]
    [InlineData("--shots", "tolerance", "--added-noise", "0:1:+0.5", "--shots", "1")]
    [InlineData("--shots", "tolerance", "--added-noise", "0:1:+0.5")]
    [InlineData("--delay", "tolerance", "--added-noise", "1", "--shots", "100", "--delay", "3 Hz")]
    [InlineData("--power", "tolerance", "--added-noise", "1", "--shots", "100", "--power", "0")]
    [InlineData("--calibration-uncertainty", "tolerance", "--added-noise", "1", "--shots", "100", "--calibration-uncertainty", "-1")]
    [InlineData("--threshold", "lifetime", "--threshold", "abc")]
    [InlineData("--confidence", "lifetime", "--confidence", "1.5")]
    [InlineData("--after", "lifetime", "--after", "nowhere")]
    public async Task BadOptions_ExitWithCode2_NamingTheOption(string option, params string[] args)
    {
        Assert.Equal(Commands.Cli.BadInput, await Invoke([.. args, "--out", _dir]));
        Assert.Contains(option, _err.ToString());
    }

    [Fact]
    public async Task LifetimeTakesFittedValuesAndRefusesABadFile()
    {
        Directory.CreateDirectory(_dir);
        string fit = Path.Combine(_dir, "fit.json");
        File.WriteAllText(fit, """{ "parameters": { "modes.drum.bath.occupancy": { "value": 60, "stderr": 5 } } }""");
        string o = Path.Combine(_dir, "measured");
        Assert.Equal(0, await Invoke("lifetime", "--fitted", fit, "--out", o, "--quiet"));
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(o, "lifetime.json")))!;
        Assert.Equal(60, json["measured_values"]![0]!["value"]!.GetValue<double>());
        Assert.True(json["physical_lifetime_sd_s"]!.GetValue<double>() > 0);
        // A colder bath (60 quanta against the demo's ≈ 76 at 15 mK) keeps the squeezing longer (common practice: t* ∝ 1/(γ n_th)).
        Assert.Equal(0, await Invoke("lifetime", "--out", _dir, "--quiet"));
        double demo = JsonNode.Parse(File.ReadAllText(Path.Combine(_dir, "lifetime.json")))!["physical_lifetime_s"]!.GetValue<double>();
        Assert.True(json["physical_lifetime_s"]!.GetValue<double>() > demo);

        File.WriteAllText(fit, "{ \"parameters\": { } }");
        Assert.Equal(Commands.Cli.BadInput, await Invoke("lifetime", "--fitted", fit, "--out", o, "--quiet"));
        Assert.Contains("fit.json", _err.ToString());
    }
}

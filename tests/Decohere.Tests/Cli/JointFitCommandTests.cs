using System.CommandLine;
using System.Text.Json.Nodes;
using Decohere.Cli.Commands;

using CliApp = Decohere.Cli.Commands.Cli;

namespace Decohere.Tests.Cli;

/// <summary><c>joint-fit</c> end to end on the example: every file written and readable by an independent reader; bad input exits 2 with line and column.</summary>
public sealed class JointFitCommandTests : IDisposable
{
    private readonly string _dir = TestPaths.NewTempDirectory();
    private readonly StringWriter _out = new(), _err = new();

    public void Dispose() => Directory.Delete(_dir, true);

    private Task<int> Invoke(params string[] args)
    {
        var console = AppConsole.Capture(_out, _err);
        var root = new RootCommand("test") { JointFitCommand.Create(console) };
        return CliApp.InvokeAsync(root, args, console);
    }

    private static string Example => Path.Combine(TestPaths.RepositoryRoot, "scenarios", "joint", "joint.yaml");

    [Fact]
    public async Task TheExampleWritesItsTablesSummaryPlotAndResultsTable()
    {
        string output = Path.Combine(_dir, "out");
        Assert.Equal(0, await Invoke("joint-fit", Example, "--out", output, "--format", "parquet,csv", "--no-profiles", "--starts", "1"));
        foreach (var f in new[] { "joint-fit.json", "joint-fit.parquet", "joint-fit.csv", "joint-fit.png", "joint-fit.svg", "joint-fit.md", "decohere-manifest.json" })
            Assert.True(File.Exists(Path.Combine(output, f)), f);
        // DuckDB, an independent Parquet reader: one row per point of each data set (8 delays × var_i, var_q; 80 ring-down
        // points; 12 cooperativities; 3 sideband asymmetries, as the example's files hold), every model value a finite number.
        var rows = DuckDb.Query($"SELECT data_set, count(*), count(model), min(x_unit), min(unit) FROM read_parquet({DuckDb.Literal(Path.Combine(output, "joint-fit.parquet"))}) GROUP BY data_set ORDER BY data_set");
        Assert.Equal(["cooling", "heating", "ringdown", "sidebands"], rows.Select(r => (string)r[0]!));
        Assert.Equal([12L, 16L, 80L, 3L], rows.Select(r => Convert.ToInt64(r[1])));
        Assert.Equal([12L, 16L, 80L, 3L], rows.Select(r => Convert.ToInt64(r[2])));
        Assert.Equal(["", "s", "s", "Hz"], rows.Select(r => (string)r[3]!));
        Assert.Equal(["quanta", "quanta", "data units", ""], rows.Select(r => (string)r[4]!));
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(output, "joint-fit.json")))!;
        Assert.True(json["parameters"]!["gamma"]!["shared"]!.GetValue<bool>());
        Assert.Equal("Hz", json["parameters"]!["gamma"]!["unit"]!.GetValue<string>());
        // The fitted scenario's paths, for planning: the heating curve's damping is the joint gamma.
        Assert.Equal(json["parameters"]!["gamma"]!["value"]!.GetValue<double>(),
            json["data_sets"]!["heating"]!["scenario_values"]!["modes.drum.linewidth"]!["value"]!.GetValue<double>());
        Assert.Contains("| gamma |", File.ReadAllText(Path.Combine(output, "joint-fit.md")));
        // The bath temperature follows from the fitted occupancy by Bose–Einstein, T = hf/(k_B ln(1 + 1/n)), with the exact SI
        // h and k_B (CODATA 2018) and the drum's 5 MHz of device.yaml.
        var derived = json["derived"]!.AsArray().Single()!;
        double occupancy = json["parameters"]!["n_bath"]!["value"]!.GetValue<double>();
        double kelvin = 6.62607015e-34 * 5e6 / (1.380649e-23 * Math.Log(1 + 1 / occupancy));
        Assert.Equal("n_bath", derived["parameter"]!.GetValue<string>());
        Assert.Equal(kelvin, derived["value"]!.GetValue<double>(), kelvin * 1e-12);
    }

    [Fact]
    public async Task ABadFitFileExitsTwoWithLineAndColumnAndWritesNothing()
    {
        foreach (var file in Directory.GetFiles(Path.GetDirectoryName(Example)!)) File.Copy(file, Path.Combine(_dir, Path.GetFileName(file)));
        string bad = Path.Combine(_dir, "bad.yaml");
        File.WriteAllText(bad, File.ReadAllText(Example).Replace("set: { linewidth: gamma }", "set: { linewidth: gamm }"));
        string output = Path.Combine(_dir, "out");
        Assert.Equal(2, await Invoke("joint-fit", bad, "--out", output, "-q"));
        string line = File.ReadAllLines(bad).Select((l, i) => (l, i)).First(p => p.l.Contains("gamm }")).i + 1 is var n ? $"(line {n}, column" : "";
        Assert.Contains($"data.ringdown.set.linewidth {line}", _err.ToString());
        Assert.Contains("unknown parameter 'gamm'", _err.ToString());
        Assert.False(Directory.Exists(output));
    }
}

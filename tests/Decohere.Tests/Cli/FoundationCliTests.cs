using System.Text.Json.Nodes;
using Decohere.Scenarios;

namespace Decohere.Tests.Cli;

public class FoundationCliTests
{
    [Fact]
    public void RunOnTheDemoWritesTablesSummaryAndPlots()
    {
        string dir = TestPaths.NewTempDirectory();
        var result = CliProcess.Run(dir, "run");
        Assert.True(result.ExitCode == 0, result.Stderr);
        string output = Path.Combine(dir, "results", "demo-drum");
        foreach (var file in new[] { "covariance.parquet", "summary.json", "variance.png", "variance.svg" })
            Assert.True(new FileInfo(Path.Combine(output, file)).Length > 1000, file);
        Assert.Contains("squeeze", result.Stdout);

        var summary = JsonNode.Parse(File.ReadAllText(Path.Combine(output, "summary.json")))!;
        Assert.Equal(ScenarioLoader.Demo().SourceHash, (string?)summary["scenario_sha256"]);
        Assert.Equal(20261201L, (long)summary["seed"]!);
        var squeeze = summary["stages"]!.AsArray().Single(s => (string?)s!["name"] == "squeeze")!;
        // After 2 ms ≈ 70 relaxation times of the Bogoliubov mode the drum sits at the steady state of the full
        // rotating-wave model, V_min = [Γe^{−2r}(n_c+½) + γ(n_th+½)c]/(Γ + γc) (PHYSICS.md check value), with
        // n_th from Bose–Einstein at 15 mK and 4.1 MHz (CODATA 2018 constants).
        double k = 2 * Math.PI * 210e3, g = 2 * Math.PI * 0.15, gm = 2 * Math.PI * 25e3, gp = 2 * Math.PI * 18e3;
        double nth = Decohere.Core.Physics.Occupancy(4.1e6, 0.015), nc = 0.04;
        double rate = 4 * (gm * gm - gp * gp) / k, c = 1 + (rate + g) / k;
        double expected = (rate * (gm - gp) / (gm + gp) * (nc + 0.5) + g * (nth + 0.5) * c) / (rate + g * c);
        Assert.Equal(expected, (double)squeeze["end"]!["drum"]!["var_min"]!, 9);
        Assert.Equal(expected, (double)squeeze["two_tone"]![0]!["var_min_cavity_kept"]!, 12);
        Assert.Equal(expected, (double)squeeze["steady"]!["drum"]!["var_min"]!, 9);
        Assert.True((bool)squeeze["stable"]!);
        Assert.Empty(Directory.GetFiles(output, "*.partial-*"));
    }

    [Fact]
    public void CheckPrintsWhatAPhysicistChecks()
    {
        var result = CliProcess.Run(TestPaths.RepositoryRoot, "check", "scenarios/demo.yaml");
        Assert.True(result.ExitCode == 0, result.Stderr);
        foreach (var expected in new[] { "cooperativity", "κ/ω_m", "γ·n_th", "stable", "two-tone", "bath n_th" })
            Assert.Contains(expected, result.Stdout);
        // C = 4G²/(κγ) = 4·(25 kHz)²/(210 kHz · 0.15 Hz) = 79365 (the 2π factors cancel; hand calculation).
        Assert.Contains("7.937E+04", result.Stdout.Replace("7.937e+04", "7.937E+04"));
    }

    [Fact]
    public void CheckWarnsWhereAssumptionsBreak()
    {
        string dir = TestPaths.NewTempDirectory();
        string file = Path.Combine(dir, "s.yaml");
        File.WriteAllText(file, """
            name: warn
            model: effective
            modes:
              m: { kind: mechanical, frequency: 1 MHz, linewidth: 1 Hz, bath: { occupancy: 5 } }
              c: { kind: cavity, frequency: 5 GHz, linewidth: 300 kHz, bath: { occupancy: 0 } }
            stages:
              - { name: s, duration: 1 ms, tones: [ { cavity: c, mechanical: m, sideband: red, coupling: 100 kHz } ] }
            readout: { mode: m, added_noise: 0.3, shots: 100, stage: s, delays: [0 ms] }
            """);
        var result = CliProcess.Run(dir, "check", file);
        Assert.Equal(0, result.ExitCode);
        Assert.Contains("sidebands are not resolved", result.Stdout);
        Assert.Contains("is not ≪ κ", result.Stdout);
        Assert.Contains("below ½, the quantum limit", result.Stdout);
    }

    [Fact]
    public void BadScenarioExitsTwoAndWritesNothing()
    {
        string dir = TestPaths.NewTempDirectory();
        string file = Path.Combine(dir, "bad.yaml");
        File.WriteAllText(file, ScenarioLoaderTestsText.Replace("duration: 1 ms", "duration: 5 kHz").Replace("linewidth: 1 Hz", "linewidht: 1 Hz"));
        var result = CliProcess.Run(dir, "run", file, "--out", Path.Combine(dir, "out"));
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("stages[0].duration (line 15", result.Stderr);
        Assert.Contains("did you mean 'linewidth'", result.Stderr);
        Assert.False(Directory.Exists(Path.Combine(dir, "out")));
    }

    private static string ScenarioLoaderTestsText => Decohere.Tests.Scenarios.ScenarioLoaderTests.Minimal;

    [Fact]
    public void InitWritesTheDemoAndRefusesToOverwrite()
    {
        string dir = TestPaths.NewTempDirectory();
        var first = CliProcess.Run(dir, "init", "mine.yaml");
        Assert.Equal(0, first.ExitCode);
        Assert.Equal(ScenarioLoader.DemoText, File.ReadAllText(Path.Combine(dir, "mine.yaml")));
        var second = CliProcess.Run(dir, "init", "mine.yaml");
        Assert.Equal(2, second.ExitCode);
        Assert.Contains("--force", second.Stderr);
    }

    [Fact]
    public void VersionHelpAndUnknownOptions()
    {
        string dir = TestPaths.NewTempDirectory();
        var version = CliProcess.Run(dir, "--version");
        Assert.Equal(0, version.ExitCode);
        Assert.Matches(@"^\d+\.\d+\.\d+", version.Stdout.Trim());
        var help = CliProcess.Run(dir, "run", "--help");
        Assert.Equal(0, help.ExitCode);
        Assert.Contains("--seed", help.Stdout);
        var unknown = CliProcess.Run(dir, "run", "--sede", "3");
        Assert.Equal(2, unknown.ExitCode);
        var missing = CliProcess.Run(dir, "check", "nowhere.yaml");
        Assert.Equal(2, missing.ExitCode);
        Assert.Contains("file not found", missing.Stderr);
    }
}

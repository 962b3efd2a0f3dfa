using Decohere.Analyses.Fitting.Joint;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>The joint-fit file at the edge: every problem at once, each at its line and column; the example loads.</summary>
public sealed class JointFitLoaderTests : IDisposable
{
    private readonly string _dir = TestPaths.NewTempDirectory();

    public JointFitLoaderTests()
    {
        foreach (var file in Directory.GetFiles(Path.Combine(TestPaths.RepositoryRoot, "scenarios", "joint")))
            File.Copy(file, Path.Combine(_dir, Path.GetFileName(file)));
    }

    public void Dispose() => Directory.Delete(_dir, true);

    private Task<JointFitProblem> Load(string text)
    {
        string path = Path.Combine(_dir, "fit.yaml");
        File.WriteAllText(path, text);
        return JointFitLoader.LoadAsync(path);
    }

    // 1-based line and column of the first occurrence of token on the line that contains anchor.
    private static (int Line, int Column) At(string text, string anchor, string token)
    {
        var lines = text.Split('\n');
        int line = Array.FindIndex(lines, l => l.Contains(anchor));
        return (line + 1, lines[line].IndexOf(token, StringComparison.Ordinal) + 1);
    }

    [Fact]
    public async Task TheExampleLoadsWithSharedAndOwnParameters()
    {
        var problem = await JointFitLoader.LoadAsync(Path.Combine(_dir, "joint.yaml"));
        Assert.Equal(["heating", "ringdown", "cooling", "sidebands"], problem.Terms.Select(t => t.Name));
        var gamma = problem.Parameters.Single(p => p.Name == "gamma");
        Assert.Equal(["heating", "ringdown", "cooling", "sidebands"], gamma.DataSets.ToArray());
        Assert.Equal(Dimension.Frequency, gamma.Dimension);
        Assert.Equal(8, gamma.Start);
        Assert.False(problem.Parameters.Single(p => p.Name == "n_add").Shared);
        // The data sets' own parameters are added by name: the ring-down's initial value and floor, the heating law.
        Assert.Contains(problem.Parameters, p => p.Name == "ringdown.floor");
        Assert.Contains(problem.Parameters, p => p.Name == "cooling.heating.exponent");
        // 1..1000 is a bounded prior; the bounds are in the parameter's units (quanta).
        var prior = problem.Priors.Single().Prior;
        Assert.Equal((1.0, 1000.0), (prior.Low!.Value, prior.High!.Value));
    }

    [Fact]
    public async Task EveryProblemIsReportedAtOnceWithItsLineAndColumn()
    {
        const string text = """
            parameters:
              n_bath: { start: 30 }
              gamma: { start: 8 Hz }
              n_unused: { start: 1 }
            data:
              heating:
                kind: delays
                file: heating.csv
                scenario: device.yaml
                set:
                  modes.drum.bath.occupancy: gamma
                  modes.drum.linewidth: gama
              ringdown:
                kind: ringdwn
                file: ringdown.csv
              cooling:
                kind: cooling
                file: missing.csv
                scenario: device.yaml
                set: { modes.drum.bath.occupancy: n_bath }
            """;
        var e = await Assert.ThrowsAsync<ScenarioException>(() => Load(text));
        void Has((int Line, int Column) at, string path, params string[] words)
        {
            var p = Assert.Single(e.Problems, p => p.Path == path);
            Assert.Equal(at, (p.Line, p.Column));
            foreach (var w in words) Assert.Contains(w, p.Message);
        }
        Has(At(text, "bath.occupancy: gamma", "gamma"), "data.heating.set.modes.drum.bath.occupancy", "'gamma' is a frequency (Hz)", "a plain number");
        Has(At(text, "linewidth: gama", "gama"), "data.heating.set.modes.drum.linewidth", "unknown parameter 'gama'", "did you mean 'gamma'");
        Has(At(text, "n_unused", "n_unused"), "parameters.n_unused", "not used by any data set");
        Has(At(text, "kind: ringdwn", "ringdwn"), "data.ringdown.kind", "'ringdwn' is not allowed", "cooling | delays | ringdown");
        Has(At(text, "missing.csv", "missing.csv"), "data.cooling.file", "missing.csv", "not found");
        Assert.True(e.Problems.Count == 5, string.Join("\n", e.Problems));
    }

    [Fact]
    public async Task UnknownKeysAndBadValuesNameTheAllowedOnes()
    {
        const string text = """
            name: ../elsewhere
            parameters:
              gamma: { start: 8 Hz, prior: 5 Hz..2 Hz, scale: 2 }
            data:
              ringdown:
                kind: ringdown
                file: ringdown.csv
                scenario: device.yaml
                set: { linewidth: gamma, decay: gamma }
            """;
        var e = await Assert.ThrowsAsync<ScenarioException>(() => Load(text));
        Assert.Contains(e.Problems, p => p.Path == "parameters.gamma.scale" && p.Message.Contains("allowed: start, unit, prior"));
        Assert.Contains(e.Problems, p => p.Path == "data.ringdown.scenario" && p.Message.Contains("allowed: kind, file, set, time_unit, sigma"));
        Assert.Contains(e.Problems, p => p.Path == "data.ringdown.set.decay" && p.Message.Contains("linewidth, initial, floor"));
        Assert.Contains(e.Problems, p => p.Path == "parameters.gamma.prior" && p.Message.Contains("lower bound must be below the upper"));
        Assert.Contains(e.Problems, p => p.Path == "name" && p.Message.Contains("starting with a letter or digit"));
        Assert.All(e.Problems, p => Assert.True(p.Line > 0 && p.Column > 0, p.ToString()));
    }

    [Fact]
    public async Task DataTooShortToFitAreRefusedAtTheirFile()
    {
        File.WriteAllText(Path.Combine(_dir, "short.csv"), "time_s,energy\n0,10\n0.001,8\n0.002,7\n");
        File.WriteAllText(Path.Combine(_dir, "empty.csv"), "cooperativity,occupancy\n");
        const string text = """
            parameters: { gamma: { start: 8 Hz } }
            data:
              ringdown: { kind: ringdown, file: short.csv, set: { linewidth: gamma } }
              cooling: { kind: cooling, file: empty.csv, scenario: device.yaml, set: { modes.drum.linewidth: gamma } }
            """;
        var e = await Assert.ThrowsAsync<ScenarioException>(() => Load(text));
        Assert.Equal(At(text, "short.csv", "short.csv"), (e.Problems.Single(p => p.Path == "data.ringdown.file") is var r ? (r.Line, r.Column) : default));
        Assert.Contains("at least 5", e.Problems.Single(p => p.Path == "data.ringdown.file").Message);
        Assert.Contains(e.Problems, p => p.Path == "data.cooling.file");
    }

    [Fact]
    public async Task SidebandsNeedTheFullModelAndAStageWithBothProbes()
    {
        const string text = """
            parameters:
              n_bath: { start: 30 }
            data:
              effective:
                kind: sidebands
                file: sidebands.csv
                scenario: device.yaml
                set: { modes.drum.bath.occupancy: n_bath }
              wrong_stage:
                kind: sidebands
                file: sidebands.csv
                scenario: thermometry.yaml
                stage: nowhere
                set: { modes.drum.bath.occupancy: n_bath }
            """;
        var e = await Assert.ThrowsAsync<ScenarioException>(() => Load(text));
        Assert.Contains(e.Problems, p => p.Path == "data.effective.scenario" && p.Message.Contains("model: full"));
        Assert.Contains(e.Problems, p => p.Path == "data.wrong_stage.stage" && p.Message.Contains("unknown stage 'nowhere'") && p.Line == 13);
    }
}

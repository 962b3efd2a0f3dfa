using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Tests.Scenarios;

public class ScenarioLoaderTests
{
    internal const string Minimal = """
        name: t
        modes:
          drum:
            kind: mechanical
            frequency: 4 MHz
            linewidth: 1 Hz
            bath: { occupancy: 10 }
          lc:
            kind: cavity
            frequency: 5 GHz
            linewidth: 200 kHz
            bath: { occupancy: 0 }
        stages:
          - name: cool
            duration: 1 ms
            tones:
              - { cavity: lc, mechanical: drum, sideband: red, coupling: 20 kHz }
        """;

    private static ScenarioException Fails(string yaml) => Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml, "test.yaml"));

    [Fact]
    public void DemoLoadsAndMatchesTheFileInScenarios()
    {
        var demo = ScenarioLoader.Demo();
        Assert.Equal("demo-drum", demo.Name);
        Assert.Equal(3, demo.Stages.Length);
        string file = Path.Combine(TestPaths.RepositoryRoot, "scenarios", "demo.yaml");
        Assert.Equal(File.ReadAllText(file), ScenarioLoader.DemoText);
        // 15 mK at 4.1 MHz through Bose–Einstein with the exact CODATA 2018 constants.
        Assert.Equal(Physics.Occupancy(4.1e6, 0.015), demo.ModeNamed("drum").Bath.Occupancy);
    }

    [Theory]
    [InlineData("demo.yaml")]
    [InlineData("cooling-limit.yaml")]
    [InlineData("two-drums.yaml")]
    public void ExampleScenariosLoad(string file) => ScenarioLoader.Load(Path.Combine(TestPaths.RepositoryRoot, "scenarios", file));

    [Fact]
    public void QuantitiesBecomeSi()
    {
        var s = ScenarioLoader.Parse(Minimal);
        Assert.Equal(4e6, s.ModeNamed("drum").FrequencyHz);
        Assert.Equal(2 * Math.PI * 1.0, s.ModeNamed("drum").DecayRate, 1e-12);
        Assert.Equal(1e-3, s.Stages[0].DurationS);
        Assert.Equal(2e4, s.Stages[0].Tones[0].CouplingHz);
        Assert.Equal(64, s.SourceHash.Length);
    }

    [Fact]
    public void CouplingFormsAreEquivalent()
    {
        // G = g0·√n; C = 4G²/(κγ) (cooperativity as defined in M. Aspelmeyer et al., Rev. Mod. Phys. 86, 1391 (2014)).
        var g0 = ScenarioLoader.Parse(Minimal.Replace("coupling: 20 kHz", "g0: 20 Hz, photons: 1e6"));
        Assert.Equal(2e4, g0.Stages[0].Tones[0].CouplingHz, 1e-6);
        double c = 4 * 2e4 * 2e4 / (2e5 * 1.0);
        var coop = ScenarioLoader.Parse(Minimal.Replace("coupling: 20 kHz", $"cooperativity: {c}"));
        Assert.Equal(2e4, coop.Stages[0].Tones[0].CouplingHz, 1e-6);
        var both = Fails(Minimal.Replace("coupling: 20 kHz", "coupling: 20 kHz, cooperativity: 3"));
        Assert.Contains(both.Problems, p => p.Message.Contains("exactly one of coupling"));
    }

    [Fact]
    public void UnknownKeySuggestsNearestName()
    {
        var e = Fails(Minimal.Replace("linewidth: 1 Hz", "linewidht: 1 Hz"));
        var p = Assert.Single(e.Problems, p => p.Path == "modes.drum.linewidht");
        Assert.Contains("did you mean 'linewidth'", p.Message);
        Assert.Equal(6, p.Line);
    }

    [Fact]
    public void MissingFieldIsNamed()
    {
        var e = Fails(Minimal.Replace("    duration: 1 ms\n", ""));
        Assert.Contains(e.Problems, p => p.Path == "stages[0].duration" && p.Message.Contains("missing field 'duration'"));
    }

    [Fact]
    public void WrongUnitDimension()
    {
        var e = Fails(Minimal.Replace("duration: 1 ms", "duration: 5 kHz"));
        var p = Assert.Single(e.Problems);
        Assert.Equal("stages[0].duration", p.Path);
        Assert.Contains("is a frequency, expected a time", p.Message);
        Assert.Equal(15, p.Line);
    }

    [Theory]
    [InlineData("linewidth: 1 Hz", "linewidth: 0 Hz", "modes.drum.linewidth")]
    [InlineData("linewidth: 1 Hz", "linewidth: -2 Hz", "modes.drum.linewidth")]
    [InlineData("duration: 1 ms", "duration: 0 ms", "stages[0].duration")]
    [InlineData("occupancy: 10", "occupancy: .nan", "modes.drum.bath.occupancy")]
    [InlineData("frequency: 4 MHz", "frequency: .inf", "modes.drum.frequency")]
    public void OutOfRangeAndNonFinite(string from, string to, string path)
    {
        var e = Fails(Minimal.Replace(from, to));
        Assert.Contains(e.Problems, p => p.Path == path);
    }

    [Fact]
    public void ToneNamingUnknownOrWrongKindOfMode()
    {
        var unknown = Fails(Minimal.Replace("mechanical: drum, sideband", "mechanical: drun, sideband"));
        Assert.Contains(unknown.Problems, p => p.Path == "stages[0].tones[0].mechanical" && p.Message.Contains("did you mean 'drum'"));
        var wrong = Fails(Minimal.Replace("{ cavity: lc, mechanical: drum", "{ cavity: drum, mechanical: lc"));
        Assert.Contains(wrong.Problems, p => p.Path == "stages[0].tones[0].cavity" && p.Message.Contains("is mechanical, expected a cavity"));
        Assert.Contains(wrong.Problems, p => p.Path == "stages[0].tones[0].mechanical" && p.Message.Contains("is cavity, expected a mechanical"));
    }

    [Fact]
    public void DuplicateNames()
    {
        var stages = Fails(Minimal + "\n  - { name: cool, duration: 1 ms }\n");
        Assert.Contains(stages.Problems, p => p.Message.Contains("duplicate stage name 'cool'"));
        var modes = Fails(Minimal.Replace("  lc:\n", "  drum:\n"));
        Assert.Contains(modes.Problems, p => p.Message.Contains("uplicate"));
    }

    [Fact]
    public void MalformedYamlGivesLineAndColumn()
    {
        var e = Fails("name: t\nmodes:\n  drum: { kind: mechanical\nstages: []\n");
        var p = Assert.Single(e.Problems);
        Assert.StartsWith("malformed YAML", p.Message);
        Assert.True(p.Line >= 3, $"line {p.Line}");
        Assert.True(p.Column > 0);
    }

    [Fact]
    public void EmptyStageList()
    {
        var e = Fails(Minimal[..Minimal.IndexOf("stages:", StringComparison.Ordinal)] + "stages: []\n");
        Assert.Contains(e.Problems, p => p.Path == "stages" && p.Message.Contains("empty"));
    }

    [Fact]
    public void EveryProblemIsReportedAtOnce()
    {
        string yaml = Minimal.Replace("linewidth: 1 Hz", "linewidth: 1 s").Replace("duration: 1 ms", "duration: 5 kHz")
            .Replace("sideband: red", "sideband: green") + "\nseeed: 3\n";
        var e = Fails(yaml);
        Assert.Equal(4, e.Problems.Count);
        Assert.Contains(e.Problems, p => p.Path == "modes.drum.linewidth");
        Assert.Contains(e.Problems, p => p.Path == "stages[0].duration");
        Assert.Contains(e.Problems, p => p.Path == "stages[0].tones[0].sideband" && p.Message.Contains("red | blue"));
        Assert.Contains(e.Problems, p => p.Path == "seeed" && p.Message.Contains("did you mean 'seed'"));
        Assert.All(e.Problems, p => Assert.True(p.Line > 0));
    }

    [Fact]
    public void ReadoutIsValidated()
    {
        string yaml = Minimal + """

            readout:
              mode: drum
              added_noise: 1.3
              shots: 1
              stage: coool
              delays: [0 ms, 5 ms]
            """;
        var e = Fails(yaml);
        Assert.Contains(e.Problems, p => p.Path == "readout.shots");
        Assert.Contains(e.Problems, p => p.Path == "readout.stage" && p.Message.Contains("did you mean 'cool'"));
    }

    [Fact]
    public void InitialStates()
    {
        var s = ScenarioLoader.Parse(Minimal + "\ninitial:\n  drum: { state: squeezed, squeezing_db: 3 dB, angle: 45 deg }\n  lc: { state: ground }\n");
        var sq = Assert.IsType<InitialState.Squeezed>(s.Initial["drum"]);
        Assert.Equal(3, sq.SqueezingDb);
        Assert.Equal(Math.PI / 4, sq.AngleRad, 1e-15);
        var bad = Fails(Minimal + "\ninitial:\n  drum: { state: thermal, squeezing_db: 3 }\n");
        Assert.Contains(bad.Problems, p => p.Path == "initial.drum.squeezing_db" && p.Message.Contains("does not apply"));
        Assert.Contains(bad.Problems, p => p.Path == "initial.drum.occupancy");
    }

    [Fact]
    public void StageOverridesAndDetuning()
    {
        string yaml = Minimal + "\n  - { name: pulse, duration: 0.2 ms, bath: { drum: { occupancy: 400 } }, detuning: { drum: 3 Hz } }\n";
        var s = ScenarioLoader.Parse(yaml);
        Assert.Equal(400, s.Stages[1].BathOverrides["drum"].Occupancy);
        Assert.Equal(3, s.Stages[1].DetuningsHz["drum"]);
        Assert.Equal(400, s.BathOf(s.ModeNamed("drum"), s.Stages[1]).Occupancy);
        Assert.Equal(10, s.BathOf(s.ModeNamed("drum"), s.Stages[0]).Occupancy);
    }
}

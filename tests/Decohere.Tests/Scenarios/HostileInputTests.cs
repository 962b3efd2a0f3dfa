using System.Diagnostics;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Tests.Scenarios;

/// <summary>Inputs reported against the loader (each crashed, hung, overflowed or was silently changed before); every one must end in a listed problem.</summary>
public class HostileInputTests
{
    private const string Readout = "\nreadout: { mode: drum, added_noise: 1, shots: SHOTS, stage: cool, delays: [0 ms] }\n";

    private static string Minimal => ScenarioLoaderTests.Minimal;

    private static ScenarioProblem Refused(string yaml, string path)
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml, "test.yaml"));
        var problem = Assert.Single(e.Problems, p => p.Path == path);
        Assert.True(problem.Line > 0, problem.ToString());
        return problem;
    }

    [Fact]
    public void AListAsAModeNameIsAProblemNotACastError()
    {
        string yaml = Minimal.Replace("  drum:\n", "  ? [drum]\n  :\n");
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml));
        Assert.Contains(e.Problems, p => p.Path == "modes" && p.Message.Contains("plain name") && p.Line == 3);
    }

    [Fact]
    public void AMappingAsAFieldKeyIsAProblem()
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Minimal + "\n? { a: 1 }\n: 2\n"));
        Assert.Contains(e.Problems, p => p.Path == "" && p.Message.Contains("plain name"));
    }

    [Theory]
    [InlineData("٤ MHz")]          // Arabic-Indic four
    [InlineData("४ MHz")]          // Devanagari four
    [InlineData("4٤ MHz")]
    [InlineData("４ MHz")]         // full-width four
    public void NonAsciiDigitsAreRefusedNotParsed(string frequency)
    {
        var problem = Refused(Minimal.Replace("frequency: 4 MHz", $"frequency: \"{frequency}\""), "modes.drum.frequency");
        Assert.Contains("not a number", problem.Message);
        Assert.False(Quantity.TryParse(frequency, Dimension.Frequency, out _, out _));
    }

    [Fact]
    public void FiftyThousandNestedBracketsAreAProblemNotAStackOverflow()
    {
        string yaml = "name: t\nmodes: " + new string('[', 50_000) + new string(']', 50_000) + "\n";
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml));
        var problem = Assert.Single(e.Problems);
        Assert.Equal("(yaml)", problem.Path);
        Assert.Contains($"{ScenarioLoader.MaxDepth} levels", problem.Message);
        Assert.Equal(2, problem.Line);
    }

    [Fact]
    public void DeepBlockSequencesAreRefusedToo()
    {
        // "- - - x" nests one block list per dash: 40 KB of text, 20 000 levels.
        string nested = "name: t\nmodes:\n  " + string.Concat(Enumerable.Repeat("- ", 20_000)) + "x\n";
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(nested));
        Assert.Contains(e.Problems, p => p.Message.Contains("nested"));
    }

    [Fact]
    public void AHugeLinewidthIsRefusedByNameBeforeTheEngine()
    {
        var problem = Refused(Minimal.Replace("linewidth: 1 Hz", "linewidth: 1e308"), "modes.drum.linewidth");
        Assert.Contains("exceeds", problem.Message);
        // 1e20 Hz beside the 200 kHz cavity was finite but gave a wrong stability verdict; 2π·1e20·1 ms = 6.3e17 > 1e12.
        Refused(Minimal.Replace("linewidth: 1 Hz", "linewidth: 1e20"), "modes.drum.linewidth");
    }

    [Theory]
    [InlineData("frequency: 1e308 kHz", "modes.drum.frequency")]
    [InlineData("frequency: 1e306 GHz", "modes.drum.frequency")]
    [InlineData("frequency: 1e308", "modes.drum.frequency")]   // finite, but Q = f/γ overflowed and summary.json could not be written
    public void AQuantityThatOverflowsInSiUnitsIsRefused(string field, string path)
    {
        var problem = Refused(Minimal.Replace("frequency: 4 MHz", field), path);
        Assert.True(problem.Message.Contains("finite") || problem.Message.Contains("<= 1E+16"), problem.Message);
    }

    [Fact]
    public void AHugeBlueCouplingIsRefusedInsteadOfGivingNaN()
    {
        // Loads (2π·1e12 Hz × 1 ms = 6.3e9 is within the rate range) but the stage amplifies by ~6e9 e-folds.
        var s = ScenarioLoader.Parse(Minimal.Replace("sideband: red, coupling: 20 kHz", "sideband: blue, coupling: 1e12"));
        var e = Assert.Throws<UnstableDynamicsException>(() => Dynamics.Solve(s));
        Assert.Contains("stage 'cool'", e.Message);
        Assert.Contains("coupling", e.Message);
        // A coupling far beyond the rate range is refused by the loader and names the field.
        Refused(Minimal.Replace("sideband: red, coupling: 20 kHz", "sideband: blue, coupling: 1e20"), "stages[0].tones[0].coupling");
    }

    [Fact]
    public void ABlueCouplingThatAmplifiesPastDoubleRangeIsRefused()
    {
        // G₊ = 2π·1 MHz on a 200 kHz cavity: amplitude growth ≈ G₊ − κ/4 ≈ 6e6 s⁻¹, 6000 e-folds in 1 ms; this ran and wrote NaN.
        var s = ScenarioLoader.Parse(Minimal.Replace("sideband: red, coupling: 20 kHz", "sideband: blue, coupling: 1 MHz"));
        Assert.Throws<UnstableDynamicsException>(() => Dynamics.Solve(s));
        // The same tone for 10 us is about 60 e-folds: a legitimate (if violent) amplifier.
        var brief = ScenarioLoader.Parse(Minimal.Replace("sideband: red, coupling: 20 kHz", "sideband: blue, coupling: 1 MHz").Replace("duration: 1 ms", "duration: 10 us"));
        var dynamics = Dynamics.Solve(brief);
        Assert.All(dynamics.Boundaries[^1].Covariance.Enumerate(), v => Assert.True(double.IsFinite(v)));
    }

    [Fact]
    public void AStrayKeyLineIsMalformedYaml()
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Minimal.Replace("stages:\n", ": kind:\nstages:\n")));
        Assert.Contains(e.Problems, p => p.Path == "(yaml)" && p.Message.Contains("malformed YAML"));
    }

    [Fact]
    public void AColonOnItsOwnLineAfterAListIsMalformedYamlNotAnArgumentException()
    {
        // Found by ScenarioFuzzTests: YamlDotNet's tree builder threw ArgumentException ("unsupported event type").
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse("name: t\nstages:\n  - a\n:\nreadout: 1\n"));
        var problem = Assert.Single(e.Problems);
        Assert.Equal(("(yaml)", 4, 1), (problem.Path, problem.Line, problem.Column));
        Assert.Contains("':' without a key", problem.Message);
    }

    [Fact]
    public void ALongNumberIsRefusedQuicklyAndTheParseIsLinear()
    {
        string digits = new('1', 64 * 1024);
        var clock = Stopwatch.StartNew();
        var problem = Refused(Minimal.Replace("frequency: 4 MHz", $"frequency: {digits}x"), "modes.drum.frequency");
        Assert.Contains("too long", problem.Message);
        Assert.True(problem.Message.Length < 300, "the message quotes a shortened value");
        // The pattern itself, given the long text directly, stays linear: under the length cap it sees at most 64
        // characters, and a near-limit worst case (digits then a failing character) must parse in microseconds.
        Assert.False(Quantity.TryParse(new string('1', Quantity.MaxLength - 1) + "!", Dimension.Frequency, out _, out _));
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(2), $"{clock.Elapsed}");
    }

    [Theory]
    [InlineData("3000000000")]
    [InlineData("2147483648")]
    [InlineData("1e300")]
    public void ShotsBeyondTheRangeAreRefusedNotClamped(string shots)
    {
        var problem = Refused(Minimal + Readout.Replace("SHOTS", shots), "readout.shots");
        Assert.Contains("2147483647", problem.Message);
        Assert.Contains("out of range", problem.Message);
    }

    [Theory]
    [InlineData("2e7", 20_000_000)]
    [InlineData("2.5E3", 2500)]
    [InlineData("2147483647", int.MaxValue)]
    public void ShotsInExponentFormAreAcceptedWhenWhole(string shots, int expected) =>
        Assert.Equal(expected, ScenarioLoader.Parse(Minimal + Readout.Replace("SHOTS", shots)).Readout!.Shots);

    [Theory]
    [InlineData("2.5e0")]
    [InlineData("1e-300")]
    [InlineData("١٠٠")]
    public void ShotsThatAreNotWholeAreRefused(string shots)
    {
        var problem = Refused(Minimal + Readout.Replace("SHOTS", $"\"{shots}\""), "readout.shots");
        Assert.Contains("whole number", problem.Message);
    }

    [Fact]
    public void ShorthandInitialStatesAreAccepted()
    {
        var s = ScenarioLoader.Parse(Minimal + "\ninitial: { drum: thermal, lc: ground }\n");
        Assert.Equal(new InitialState.Thermal(10), s.Initial["drum"]);   // the drum's bath: occupancy 10 in Minimal
        Assert.IsType<InitialState.Ground>(s.Initial["lc"]);
        Assert.IsType<InitialState.Steady>(ScenarioLoader.Parse(Minimal + "\ninitial: { drum: steady }\n").Initial["drum"]);
        var problem = Refused(Minimal + "\ninitial: { drum: squeezed }\n", "initial.drum");
        Assert.Contains("squeezing_db", problem.Message);
        var typo = Refused(Minimal + "\ninitial: { drum: gruond }\n", "initial.drum");
        Assert.Contains("did you mean 'ground'", typo.Message);
    }

    [Theory]
    [InlineData("bath: { occupancy: 10 }", "bath: { occupancy: 1e300 }", "modes.drum.bath.occupancy")]
    [InlineData("bath: { occupancy: 10 }", "bath: { temperature: 1e300 K }", "modes.drum.bath.temperature")]
    public void OccupanciesBeyondDoubleRangeOverShotsAreRefused(string from, string to, string path) =>
        Refused(Minimal.Replace(from, to), path);

    [Fact]
    public void DurationsThatAddUpToInfinityAreRefused()
    {
        string yaml = Minimal.Replace("duration: 1 ms", "duration: 1e308") + "  - { name: more, duration: 1e308 }\n";
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml));
        Assert.NotEmpty(e.Problems);
    }

    [Theory]
    [InlineData("dr.um")]
    [InlineData("drum[0]")]
    [InlineData("\"dr\\u001b[2Jum\"")]
    [InlineData("\"dr\\0um\"")]
    public void ModeNamesThatBreakParameterPathsOrTerminalsAreRefused(string name)
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Minimal.Replace("  drum:\n", $"  {name}:\n")));
        Assert.Contains(e.Problems, p => p.Line == 3 && p.Message.Contains("mode name"));
    }

    [Fact]
    public void StageNamesWithControlCharactersAreRefused()
    {
        var problem = Refused(Minimal.Replace("name: cool", "name: \"co\\u0007ol\""), "stages[0].name");
        Assert.Contains("U+0007", problem.Message);
    }

    [Fact]
    public void ThousandsOfModesAreRefusedInsteadOfRunningForHours()
    {
        var yaml = new System.Text.StringBuilder("name: t\nmodes:\n");
        for (int i = 0; i < 3000; i++) yaml.Append($"  m{i}: {{ kind: mechanical, frequency: 4 MHz, linewidth: 1 Hz, bath: {{ occupancy: 1 }} }}\n");
        yaml.Append("stages: [ { name: s, duration: 1 ms } ]\n");
        var clock = Stopwatch.StartNew();
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml.ToString()));
        Assert.Contains(e.Problems, p => p.Path == "modes" && p.Message.Contains("3000 modes"));
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(5), $"{clock.Elapsed}");
    }
}

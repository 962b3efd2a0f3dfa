using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Tests.Scenarios;

public class ParameterPathTests
{
    private static readonly Scenario Demo = ScenarioLoader.Demo();

    [Fact]
    public void TemperatureSetsOccupancyByBoseEinstein()
    {
        var path = ParameterPath.Parse("modes.drum.bath.temperature", Demo);
        Assert.Equal(0.015, path.Get(Demo), 15);
        var warmer = path.Set(Demo, path.ParseValue("25 mK"));
        // Bose–Einstein with the exact CODATA 2018 constants, evaluated independently here.
        double x = 6.62607015e-34 * 4.1e6 / (1.380649e-23 * 0.025);
        Assert.Equal(1 / (Math.Exp(x) - 1), warmer.ModeNamed("drum").Bath.Occupancy, 1e-9);
        Assert.Equal(0.015, path.Get(Demo), 15);   // the original is untouched
        Assert.Equal("modes.drum.bath.temperature_k", path.ColumnName);
    }

    [Theory]
    [InlineData("modes.drum.linewidth", "0.3 Hz", 0.3)]
    [InlineData("readout.added_noise", "0.7", 0.7)]
    [InlineData("stages.squeeze.tones[1].coupling", "20 kHz", 2e4)]
    [InlineData("stages[1].duration", "3 ms", 3e-3)]
    [InlineData("initial.drum.occupancy", "0.5", 0.5)]
    public void SetThenGetRoundTrips(string text, string value, double si)
    {
        var path = ParameterPath.Parse(text, Demo);
        var changed = path.Set(Demo, path.ParseValue(value));
        Assert.Equal(si, path.Get(changed), 12);
    }

    [Fact]
    public void UnknownPathNamesTheNearestAndTheAvailable()
    {
        var e = Assert.Throws<InputException>(() => ParameterPath.Parse("modes.drum.bath.temprature", Demo));
        Assert.Contains("did you mean 'modes.drum.bath.temperature'", e.Message);
        Assert.Contains("readout.added_noise", e.Message);
    }

    [Fact]
    public void ValuesAreChecked()
    {
        var path = ParameterPath.Parse("modes.drum.linewidth", Demo);
        Assert.Contains("> 0", Assert.Throws<InputException>(() => path.Set(Demo, 0)).Message);
        Assert.Contains("expected a frequency", Assert.Throws<InputException>(() => path.ParseValue("3 ms")).Message);
        Assert.Equal(Dimension.Frequency, path.Dimension);
    }

    [Fact]
    public void DetuningsMayBeNegative()
    {
        var s = ScenarioLoader.Parse(ScenarioLoaderTests.Minimal + "\n  - { name: pulse, duration: 0.2 ms, detuning: { drum: 3 Hz } }\n");
        var path = ParameterPath.Parse("stages.pulse.detuning.drum", s);
        Assert.True(path.IsSigned);
        Assert.Equal(-5e3, path.Get(path.Set(s, path.ParseValue("-5 kHz"))));
    }
}

using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Sweeps;

public class SweepGridTests
{
    private static readonly Scenario Demo = ScenarioLoader.Demo();

    [Fact]
    public void LinearRangeIncludesBothEndsWithUnits()
    {
        var axis = SweepAxis.Parse("modes.drum.bath.temperature=5mK:50mK:10", Demo);
        Assert.Equal("modes.drum.bath.temperature_k", axis.Path.ColumnName);
        Assert.Equal(10, axis.Values.Length);
        // Evenly spaced, 5 mK apart (hand calculation: (50 − 5)/9 = 5 mK).
        for (int i = 0; i < 10; i++) Assert.Equal(0.005 + 0.005 * i, axis.Values[i], 15);
        Assert.Equal(0.05, axis.Values[^1]);
    }

    [Fact]
    public void LogRangeIsEvenInLog10()
    {
        var axis = SweepAxis.Parse("stages.squeeze.tones[1].coupling = 1 kHz : 100 kHz : 5 : log", Demo);
        // 10^3, 10^3.5, 10^4, 10^4.5, 10^5 Hz (hand calculation).
        double[] expected = [1e3, Math.Sqrt(10) * 1e3, 1e4, Math.Sqrt(10) * 1e4, 1e5];
        for (int i = 0; i < 5; i++) Assert.Equal(expected[i], axis.Values[i], expected[i] * 1e-13);
        Assert.True(axis.Logarithmic);
    }

    [Fact]
    public void ListTakesUnitsPerValue()
    {
        var axis = SweepAxis.Parse("stages.release.duration=1ms,2.5 ms,10us,0.02", Demo);
        double[] expected = [1e-3, 2.5e-3, 1e-5, 0.02];
        for (int i = 0; i < 4; i++) Assert.Equal(expected[i], axis.Values[i], expected[i] * 1e-15);
        Assert.Equal("stages.release.duration_s", axis.Path.ColumnName);
    }

    [Theory]
    [InlineData("modes.drum.bath.temperature", "PATH=FROM:TO:COUNT")]
    [InlineData("modes.drum.bath.temperature=5mK:50mK", "has 2 fields")]
    [InlineData("modes.drum.bath.temperature=5mK:50mK:ten", "COUNT 'ten'")]
    [InlineData("modes.drum.bath.temperature=5mK:50mK:0", "COUNT '0'")]
    [InlineData("modes.drum.bath.temperature=5mK:50mK:4:lin", "must be 'log'")]
    [InlineData("modes.drum.bath.temperature=0:50mK:4:log", "FROM > 0 and TO > 0")]
    [InlineData("modes.drum.bath.temperature=5kHz,6mK", "expected a temperature")]
    [InlineData("modes.drum.bath.temperature=5mK,,6mK", "empty value")]
    [InlineData("modes.drum.bath.temperature=5mK:6mK,7mK", "mixes a range")]
    [InlineData("modes.drum.bath.temperatur=5mK", "did you mean 'modes.drum.bath.temperature'")]
    public void BadSpecsNameThePathAndTheForms(string text, string expected)
    {
        var e = Assert.Throws<InputException>(() => SweepAxis.Parse(text, Demo));
        Assert.Contains(expected, e.Message);
        Assert.Contains("modes.drum.bath.temperatur", e.Message);
        // Format errors repeat the allowed forms; the unknown-path and log-range messages say what to change instead.
        if (!expected.Contains("did you mean") && !expected.Contains("FROM > 0")) Assert.Contains("PATH=FROM:TO:COUNT:log or PATH=v1,v2,...", e.Message);
    }

    [Fact]
    public void CartesianOrderHasTheFirstAxisSlowest()
    {
        var a = SweepAxis.Parse("modes.drum.bath.temperature=1mK,2mK", Demo);
        var b = SweepAxis.Parse("readout.added_noise=0.5,1,2", Demo);
        var grid = SweepGrid.Create([a, b], zip: false);
        Assert.Equal(6, grid.PointCount);
        var v = new double[2];
        grid.ValuesAt(4, v);
        Assert.Equal([0.002, 1.0], v);
        var scenario = grid.Apply(Demo, v);
        Assert.Equal(1.0, scenario.Readout!.AddedNoise);
        Assert.Equal(0.002, scenario.ModeNamed("drum").Bath.TemperatureK);
        Assert.Equal(1.3, Demo.Readout!.AddedNoise); // the template is not changed
    }

    [Fact]
    public void ZipNeedsEqualLengthsAndWalksTogether()
    {
        var a = SweepAxis.Parse("modes.drum.bath.temperature=1mK,2mK,3mK", Demo);
        var b = SweepAxis.Parse("readout.added_noise=0.5,1,2", Demo);
        var grid = SweepGrid.Create([a, b], zip: true);
        Assert.Equal(3, grid.PointCount);
        var v = new double[2];
        grid.ValuesAt(2, v);
        Assert.Equal([0.003, 2.0], v);
        var c = SweepAxis.Parse("readout.shots=10,20", Demo);
        var e = Assert.Throws<InputException>(() => SweepGrid.Create([a, c], zip: true));
        Assert.Contains("readout.shots: 2", e.Message);
        Assert.Contains("given 2 times", Assert.Throws<InputException>(() => SweepGrid.Create([a, a], zip: false)).Message);
    }

    [Fact]
    public void PointSeedsDependOnlyOnTheMasterSeedAndTheIndex()
    {
        var seeds = Enumerable.Range(0, 1000).Select(p => Seeds.DeriveSeed(0, SeedStream.SweepPoint, p)).ToArray();
        Assert.All(seeds, s => Assert.True(s >= 0));
        Assert.Equal(seeds.Length, seeds.Distinct().Count());
        Assert.Equal(seeds[7], Seeds.DeriveSeed(0, SeedStream.SweepPoint, 7));
        Assert.NotEqual(Seeds.DeriveSeed(1, SeedStream.SweepPoint, 0), seeds[0]);
    }

    [Fact]
    public void ShardSpecIsChecked()
    {
        Assert.Equal(new SweepShard(2, 3), SweepShard.Parse("2/3"));
        Assert.Equal(2, new SweepShard(2, 3).PointsIn(7)); // points 2 and 5 of 0…6
        foreach (var bad in new[] { "3/3", "1", "-1/3", "a/b", "0/0" })
            Assert.Contains("K/N", Assert.Throws<InputException>(() => SweepShard.Parse(bad)).Message);
    }
}

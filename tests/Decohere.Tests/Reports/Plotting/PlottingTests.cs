using Decohere.Core;
using Decohere.Reports.Plotting;
using Decohere.Scenarios;

namespace Decohere.Tests.Reports.Plotting;

/// <summary>The plotting layer's arithmetic: decimation keeps the envelope, contours lie on the level, units and labels read as a physicist writes them.</summary>
public class PlottingTests
{
    [Fact]
    public void MinMaxDecimationKeepsEveryColumnsExtremesAndTheEnds()
    {
        // Definition of min/max decimation (common practice): per pixel column the drawn series reaches exactly the
        // extremes of the full series in that column.
        var random = new Random(7);
        int n = 200_000, columns = 1200;
        double[] x = [.. Enumerable.Range(0, n).Select(k => k * 55e-9)];
        double[] y = [.. x.Select(t => Math.Sin(2e4 * t) + 0.1 * random.NextDouble())];
        var (dx, dy) = Decimation.MinMax(x, y, columns);
        Assert.True(dx.Length <= 2 * columns + 2, $"{dx.Length} points");
        Assert.Equal((x[0], y[0]), (dx[0], dy[0]));
        Assert.Equal((x[^1], y[^1]), (dx[^1], dy[^1]));
        double width = (x[^1] - x[0]) / columns;
        int Column(double t) => Math.Min((int)((t - x[0]) / width), columns - 1);
        var full = x.Select((t, k) => (Column(t), y[k])).GroupBy(p => p.Item1).ToDictionary(g => g.Key, g => (g.Min(p => p.Item2), g.Max(p => p.Item2)));
        var kept = dx.Select((t, k) => (Column(t), dy[k])).GroupBy(p => p.Item1).ToDictionary(g => g.Key, g => (g.Min(p => p.Item2), g.Max(p => p.Item2)));
        Assert.Equal(full, kept);
        Assert.True(dx.Zip(dx.Skip(1)).All(p => p.First <= p.Second), "order kept");
    }

    [Fact]
    public void ContoursOfALinearFieldLieExactlyOnTheLevel()
    {
        // Linear interpolation along a cell edge is exact for a linear field, so every crossing satisfies x + 2y = c.
        double[] x = [.. Enumerable.Range(0, 13).Select(i => 0.25 * i)], y = [.. Enumerable.Range(0, 9).Select(j => Math.Log10(200) + 0.3 * j)];
        var z = new double[x.Length, y.Length];
        for (int i = 0; i < x.Length; i++)
            for (int j = 0; j < y.Length; j++)
                z[i, j] = x[i] + 2 * y[j];
        var segments = Contours.Segments(x, y, z, 7.1);
        Assert.NotEmpty(segments);
        foreach (var (x1, y1, x2, y2) in segments)
        {
            Assert.Equal(7.1, x1 + 2 * y1, 12);
            Assert.Equal(7.1, x2 + 2 * y2, 12);
        }
    }

    [Fact]
    public void ContoursOfACircleCloseAndStayWithinTheGridError()
    {
        // z = x² + y² at level 1 is the unit circle; linear interpolation errs by at most h²/4 in z (h the spacing),
        // i.e. by about h²/8 in radius (common practice bound for linear interpolation: |f''|·h²/8 with f'' = 2).
        double h = 0.05;
        double[] g = [.. Enumerable.Range(0, 61).Select(i => -1.5 + h * i)];
        var z = new double[g.Length, g.Length];
        for (int i = 0; i < g.Length; i++)
            for (int j = 0; j < g.Length; j++)
                z[i, j] = g[i] * g[i] + g[j] * g[j];
        var segments = Contours.Segments(g, g, z, 1);
        foreach (var (x1, y1, _, _) in segments) Assert.InRange(Math.Sqrt(x1 * x1 + y1 * y1), 1 - h * h / 4, 1 + h * h / 4);
        // Length of the polygon against 2π, within the chord error of a polygon with these many sides.
        double length = segments.Sum(s => Math.Sqrt(Math.Pow(s.X2 - s.X1, 2) + Math.Pow(s.Y2 - s.Y1, 2)));
        Assert.InRange(length, 2 * Math.PI * 0.995, 2 * Math.PI * 1.001);
        // Missing values leave a gap instead of a segment through them.
        z[30, 30 + 20] = double.NaN;
        Assert.True(Contours.Segments(g, g, z, 1).Count < segments.Count);
    }

    [Theory]
    [InlineData(new[] { 0.0, 0.5e-3, 1e-3 }, "0 ms|0.5 ms|1 ms")]
    [InlineData(new[] { 0.0 }, "0 s")]
    [InlineData(new[] { 0.0, 20e-6, 4e-3 }, "0 ms|0.02 ms|4 ms")]
    [InlineData(new[] { 1.5 }, "1.5 s")]
    [InlineData(new[] { 3e-7 }, "300 ns")]
    public void TimesAreShownInOneUnitChosenFromTheSet(double[] times, string expected) =>
        Assert.Equal(expected, string.Join('|', DisplayUnits.FormatAll(times, Dimension.Time)));

    [Fact]
    public void ZeroIsNeverShownInNanoseconds()
    {
        Assert.Equal("0 s", Quantity.Format(0, Dimension.Time));
        Assert.Equal("0 K", Quantity.Format(0, Dimension.Temperature));
    }

    [Theory]
    [InlineData(20000, "20000")]
    [InlineData(0.5, "0.5")]
    [InlineData(2e-5, "2×10⁻⁵")]
    [InlineData(1e6, "10⁶")]
    [InlineData(4.153e6, "4.153×10⁶")]
    [InlineData(0.0045, "0.0045")]
    public void TickLabelsAreNeverInComputerExponentForm(double value, string expected) => Assert.Equal(expected, Ticks.Label(value));

    [Theory]
    [InlineData(200, 20000, 5)]   // two decades: 1-2-5 steps
    [InlineData(0.08, 0.6, 4)]    // less than one decade: integer mantissas
    [InlineData(1e-3, 1e6, 4)]    // nine decades
    [InlineData(0.5, 0.7, 3)]     // a factor 1.4: even steps
    public void LogAxesGetEnoughTicks(double lo, double hi, int atLeast)
    {
        var values = Ticks.LogValues(Math.Log10(lo), Math.Log10(hi));
        Assert.True(values.Length >= atLeast, string.Join(", ", values));
        Assert.All(values, v => Assert.InRange(v, lo * 0.999, hi * 1.001));
    }

    [Fact]
    public void ParameterPathsReadAsQuantitiesWithUnitsFromTheData()
    {
        var temperature = QuantityLabels.For("modes.drum.bath.temperature");
        Assert.Equal("bath temperature of drum (mK)", temperature.Label(temperature.UnitFor([0.005, 0.05])));
        var demo = ScenarioLoader.Demo();
        // In the demo the second tone of 'squeeze' is on the blue sideband (scenarios/demo.yaml).
        Assert.Equal(Sideband.Blue, demo.Stages[demo.StageIndex("squeeze")].Tones[1].Sideband);
        var blue = QuantityLabels.For("stages.squeeze.tones[1].coupling", demo);
        Assert.Equal("blue-tone coupling G₊/2π (squeeze) (kHz)", blue.Label(blue.UnitFor([5e3, 24e3])));
        Assert.Equal("tone 1 coupling G/2π (squeeze)", QuantityLabels.For("stages.squeeze.tones[1].coupling").Name);
        var lifetime = QuantityLabels.For("physical_lifetime:squeeze");
        Assert.Equal("physical lifetime (squeeze) (ms)", lifetime.Label(lifetime.UnitFor([0.0045, 0.09])));
        Assert.Equal("added noise n_add (quanta)", QuantityLabels.For("readout.added_noise").Label(QuantityLabels.For("readout.added_noise").UnitFor([1])));
        Assert.Equal("some.unknown_thing", QuantityLabels.For("some.unknown_thing").Name);
    }
}

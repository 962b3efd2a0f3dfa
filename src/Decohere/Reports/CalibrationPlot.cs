using ScottPlot;
using Decohere.Analyses.Calibration;
using Decohere.Reports.Plotting;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>
/// fit-noise.png/.svg: measured var_i and var_q against the prepared occupancy with their exact χ² intervals, the fitted
/// line var = gain·(n + ½) + added_noise with its confidence band (from the standard errors and their correlation), drawn
/// back to n = −½ where its value is the added noise, marked with its profile interval.
/// </summary>
public static class CalibrationPlot
{
    /// <summary>Renders the figure to <paramref name="stem"/>.png and .svg; returns the paths.</summary>
    public static string[] Save(CalibrationResult r, string stem)
    {
        var plot = Figure.New();
        double z = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.5 + r.Confidence / 2);
        double nMax = r.Points.Max(p => p.Occupancy);
        const int points = 101;
        double[] n = [.. Enumerable.Range(0, points).Select(k => -0.5 + (nMax + 0.5) * 1.03 * k / (points - 1))];
        double g = r.Gain.Value, a = r.AddedNoise.Value, sg = r.Gain.StandardError, sa = r.AddedNoise.StandardError, rho = r.Correlation;
        double[] line = [.. n.Select(x => g * (x + 0.5) + a)];
        double[] sd = [.. n.Select(x => Math.Sqrt(Math.Max(0, (x + 0.5) * (x + 0.5) * sg * sg + sa * sa + 2 * (x + 0.5) * rho * sg * sa)))];
        if (sd.All(double.IsFinite))
        {
            var band = plot.Add.FillY(n, [.. line.Select((y, k) => y + z * sd[k])], [.. line.Select((y, k) => y - z * sd[k])]);
            band.FillColor = Figure.Colour(0).WithAlpha(0.18);
            band.LineWidth = 0;
            band.LegendText = $"fit, {r.Confidence * 100:G3}% band";
        }
        var fit = plot.Add.ScatterLine(n, line);
        fit.Color = Figure.Colour(0);
        fit.LineWidth = Figure.LineWidth;
        fit.LegendText = $"gain·(n + ½) + added noise, gain {Ticks.Label(g)}";

        int series = 1;
        foreach (var (name, pick) in new (string, Func<CalibrationPoint, double>)[] { ("var_i", p => p.VarI), ("var_q", p => p.VarQ) })
        {
            var colour = Figure.Colour(series++);
            // The two quadratures at one occupancy are drawn a little apart so their bars do not hide each other.
            double shift = (series == 2 ? -1 : 1) * 0.006 * (nMax + 0.5);
            double[] x = [.. r.Points.Select(p => p.Occupancy + shift)];
            double[] y = [.. r.Points.Select(pick)];
            var intervals = r.Points.Select(p => VarianceStatistics.Interval(pick(p), p.Shots, r.Confidence)).ToArray();
            var bars = plot.Add.ErrorBar(x, y, [.. intervals.Select((v, k) => v.High - y[k])]);
            bars.YErrorPositive = [.. intervals.Select((v, k) => v.High - y[k])];
            bars.YErrorNegative = [.. intervals.Select((v, k) => y[k] - v.Low)];
            bars.Color = colour;
            var marks = plot.Add.ScatterPoints(x, y);
            marks.Color = colour;
            marks.MarkerSize = 9;
            marks.LegendText = $"{name} ({r.Confidence * 100:G3}% χ² interval)";
        }
        var e = r.AddedNoise;
        var intercept = plot.Add.ScatterPoints(new[] { -0.5 }, new[] { e.Value });
        intercept.Color = Figure.Ink;
        intercept.MarkerShape = MarkerShape.FilledDiamond;
        intercept.MarkerSize = 13;
        intercept.LegendText = $"added noise {Ticks.Label(e.Value)} [{Ticks.Label(e.Low)}, {(e.HighReached ? Ticks.Label(e.High) : "∞")}] at n = −½; " +
                               $"{Ticks.Label(r.AddedNoiseInputReferred.Value)} quanta input-referred";
        var bar = plot.Add.Line(-0.5, e.LowReached ? e.Low : 0, -0.5, e.High);
        bar.Color = Figure.Ink;
        bar.LineWidth = 3;
        bar.MarkerSize = 0;
        var zero = plot.Add.VerticalLine(-0.5);
        zero.Color = Figure.Guide;
        zero.LineWidth = 1;
        zero.LinePattern = LinePattern.Dotted;

        Ticks.Linear(plot.Axes.Bottom);
        Ticks.Linear(plot.Axes.Left);
        plot.Axes.SetLimitsX(-0.5 - 0.05 * (nMax + 0.5), nMax + 0.08 * (nMax + 0.5));
        plot.XLabel("prepared occupancy n (quanta)");
        plot.YLabel("measured variance (measured units)");
        plot.Title($"noise calibration from {Path.GetFileName(r.Source)}: {r.Points.Length} points, p = {r.Goodness.PValue:G3}");
        Legends.BelowIfAny(plot);
        return Figure.Save(plot, stem, Figure.Width, 820);
    }
}

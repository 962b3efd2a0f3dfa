using ScottPlot;
using System.Globalization;
using Decohere.IO;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>estimates.png: estimated var_min and var_max per delay with their intervals, over the model's curves, log axis.</summary>
public static class EstimatesPlot
{
    /// <summary>Renders the plot to PNG, written atomically.</summary>
    public static void Save(ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, string pngPath)
    {
        var plot = Build(sampler, estimates);
        AtomicFile.Write(pngPath, tmp => plot.SavePng(tmp, 1200, 700));
    }

    private static Plot Build(ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates)
    {
        var plot = new Plot();
        var delays = sampler.Delays;
        double first = delays.Min(d => d.TimeS), last = delays.Max(d => d.TimeS);
        double start = sampler.Dynamics.StageStarts[sampler.Scenario.StageIndex(sampler.Scenario.Readout!.Stage)];
        const int points = 200;
        var t = new double[points];
        var min = new double[points];
        var max = new double[points];
        for (int k = 0; k < points; k++)
        {
            double time = last > first ? first + (last - first) * k / (points - 1) : first;
            var m = sampler.Dynamics.StateAt(time).Moments(sampler.Chain.ModeIndex);
            t[k] = (time - start) * 1e3;
            min[k] = Log(m.VarMin);
            max[k] = Log(m.VarMax);
        }
        var palette = new ScottPlot.Palettes.Category10();
        // The axis spans the model and the estimates; an interval reaching zero or below (noise subtraction
        // overshooting) is drawn down to the axis floor instead of stretching the axis over decades.
        double floor = Math.Min(Math.Min(min.Min(), Log(0.5)),
            estimates.Select(e => e.VarMin.Value).Where(v => v > 0).Select(Log).DefaultIfEmpty(double.PositiveInfinity).Min()) - 0.5;
        var lo = floor;
        var hi = max.Max();
        void Series(double[] curve, Func<ReadoutEstimate, Estimate> pick, string name, Color color)
        {
            var line = plot.Add.ScatterLine(t, curve);
            line.Color = color;
            line.LineWidth = 2;
            line.LegendText = $"{name} (model)";
            var xs = new double[estimates.Count];
            var ys = new double[estimates.Count];
            for (int k = 0; k < estimates.Count; k++)
            {
                var e = pick(estimates[k]);
                xs[k] = delays[k].DelayS * 1e3;
                ys[k] = Math.Max(Log(e.Value), floor);
                var bar = plot.Add.Line(xs[k], Math.Max(Log(e.Low), floor), xs[k], Log(e.High));
                bar.Color = color;
                bar.LineWidth = 2;
                hi = Math.Max(hi, Log(e.High));
            }
            var marks = plot.Add.ScatterPoints(xs, ys);
            marks.Color = color;
            marks.MarkerSize = 9;
            marks.LegendText = $"{name} (estimated, {sampler.ShotsPerDelay} shots, 95% interval)";
        }
        Series(min, e => e.VarMin, "var_min", palette.GetColor(0));
        Series(max, e => e.VarMax, "var_max", palette.GetColor(1));

        var zero = plot.Add.HorizontalLine(Log(0.5));
        zero.Color = Colors.Black;
        zero.LinePattern = LinePattern.Dotted;
        zero.LegendText = "zero-point (0.5)";
        plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = y => Math.Pow(10, y).ToString("G3", CultureInfo.InvariantCulture),
        };
        double pad = 0.08 * Math.Max(hi - lo, 0.5);
        plot.Axes.SetLimitsY(lo - pad, hi + pad);
        plot.XLabel($"delay after the start of stage '{sampler.Scenario.Readout!.Stage}' (ms)");
        plot.YLabel($"{sampler.Chain.Mode} quadrature variance (quanta, log scale)");
        plot.Title($"{sampler.Scenario.Name}: inferred from shots (added noise {sampler.Chain.AddedNoise:G3} subtracted) vs model");
        plot.ShowLegend(Alignment.LowerRight);
        return plot;
    }

    // Non-positive inferred variances (noise subtraction overshooting) sit at the bottom of the axis.
    private static double Log(double v) => Math.Log10(Math.Max(v, 1e-6));
}

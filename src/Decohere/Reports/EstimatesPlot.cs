using ScottPlot;
using Decohere.Engine;
using Decohere.Reports.Plotting;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>
/// estimates.png/.svg: estimated var_min and var_max per delay with their intervals over the model's curves (the run's
/// covariance table between the delays, and the model at each delay), log variance axis.
/// </summary>
public static class EstimatesPlot
{
    /// <summary>The figure, ready to write to <paramref name="stem"/>.png and .svg.</summary>
    public static FigureOutput Draw(Evolution evolution, ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, string stem) =>
        new(new Multiplot(Build(evolution, sampler, estimates)), stem, Figure.Width, Figure.Height);

    private static Plot Build(Evolution evolution, ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates)
    {
        var plot = Figure.New();
        var delays = sampler.Delays;
        double start = delays[0].TimeS - delays[0].DelayS;
        double first = delays.Min(d => d.DelayS), last = delays.Max(d => d.DelayS);
        var axis = new TimeAxis(delays.Select(d => d.DelayS));
        int mode = evolution.ModeNames.IndexOf(sampler.Chain.Mode);
        // The model curve: the covariance table's rows between the first and the last delay (one run of rows, as times
        // increase), merged in order with the exact model at each delay, which replaces a row at the same delay.
        var times = evolution.Times;
        bool Shown(double delay) => delay >= first && delay <= last && (delay > 0 || !axis.Log);
        int row = mode < 0 ? times.Length : 0;
        while (row < times.Length && !Shown(times[row] - start)) row++;
        int end = row;
        while (end < times.Length && Shown(times[end] - start)) end++;
        int count = 0;
        var (t, min, max) = (new double[end - row + delays.Length], new double[end - row + delays.Length], new double[end - row + delays.Length]);
        void Add(double delay, in ModeMoments m)
        {
            (t[count], min[count], max[count]) = (axis.At(delay), Log(m.VarMin), Log(m.VarMax));
            count++;
        }
        double previous = double.NaN;
        foreach (var d in delays.OrderBy(d => d.DelayS))
        {
            for (; row < end && times[row] - start < d.DelayS; row++) Add(times[row] - start, evolution.Moments[row, mode]);
            if (row < end && times[row] - start == d.DelayS) row++;
            if (d.DelayS == previous) count--;
            Add(previous = d.DelayS, d.Model);
        }
        for (; row < end; row++) Add(times[row] - start, evolution.Moments[row, mode]);
        // The series are the arrays' first `count` entries, used in place (copies of 10⁵ rows cost more than the plot's arithmetic).
        ArraySegment<double> ts = new(t, 0, count), mins = new(min, 0, count), maxs = new(max, 0, count);
        // An interval reaching zero or below (noise subtraction overshooting) is drawn down to the axis floor instead of
        // stretching the axis over decades.
        double floor = Math.Min(Math.Min(mins.Min(), Log(0.5)),
            estimates.Select(e => e.VarMin.Value).Where(v => v > 0).Select(Log).DefaultIfEmpty(double.PositiveInfinity).Min()) - 0.3;
        double hi = maxs.Max();
        void Series(ArraySegment<double> model, Func<ReadoutEstimate, Estimate> pick, string name, Color color)
        {
            // Tens of thousands of rows drawn at screen resolution: the same envelope, a fraction of the drawing.
            var (lx, ly) = Decimation.MinMax(ts, model, VariancePlot.Columns);
            var line = plot.Add.ScatterLine(lx, ly);
            line.Color = color;
            line.LineWidth = Figure.LineWidth;
            line.LegendText = $"{name}, model";
            var xs = new double[estimates.Count];
            var ys = new double[estimates.Count];
            for (int k = 0; k < estimates.Count; k++)
            {
                var e = pick(estimates[k]);
                xs[k] = axis.At(delays[k].DelayS);
                ys[k] = Math.Max(Log(e.Value), floor);
                var bar = plot.Add.Line(xs[k], Math.Max(Log(e.Low), floor), xs[k], Log(e.High));
                bar.Color = color;
                bar.LineWidth = Figure.LineWidth;
                bar.MarkerSize = 0;
                hi = Math.Max(hi, Log(e.High));
            }
            var marks = plot.Add.ScatterPoints(xs, ys);
            marks.Color = color;
            marks.MarkerSize = 10;
            marks.LegendText = $"{name}, from shots (95% interval)";
        }
        Series(mins, e => e.VarMin, "var_min", Figure.Colour(0));
        Series(maxs, e => e.VarMax, "var_max", Figure.Colour(1));

        var zero = plot.Add.HorizontalLine(Log(0.5));
        zero.Color = Figure.Ink;
        zero.LineWidth = 1;
        zero.LinePattern = LinePattern.Dotted;
        zero.LegendText = "zero-point (0.5)";
        double pad = 0.06 * Math.Max(hi - floor, 0.5);
        Ticks.Log(plot.Axes.Left, floor - pad, hi + pad);
        plot.Axes.SetLimitsY(floor - pad, hi + pad);
        axis.Apply(plot.Axes.Bottom, $"delay after the start of {sampler.Scenario.Readout!.Stage}", first, last);
        plot.YLabel($"{sampler.Chain.Mode} quadrature variance (quanta)");
        plot.Title($"{sampler.Scenario.Name}: {sampler.ShotsPerDelay} shots per delay, added noise {sampler.Chain.AddedNoise:G3} subtracted");
        Figure.LegendOutside(plot);
        return plot;
    }

    // Non-positive inferred variances (noise subtraction overshooting) sit at the bottom of the axis.
    private static double Log(double v) => Math.Log10(Math.Max(v, 1e-6));
}

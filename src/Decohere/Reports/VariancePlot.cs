using ScottPlot;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Reports.Plotting;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>
/// variance.png/.svg: var_min and var_max of each mechanical mode against time on a log axis, zero-point line, named
/// stages shaded. Long tables are drawn at screen resolution (<see cref="Decimation"/>).
/// </summary>
public static class VariancePlot
{
    /// <summary>Pixel columns of the data area the series are reduced to (about the figure's width).</summary>
    public const int Columns = Figure.Width;

    /// <summary>The figure, ready to write to <paramref name="stem"/>.png and .svg (each atomically).</summary>
    public static FigureOutput Draw(Evolution evolution, string stem) => new(new Multiplot(Build(evolution)), stem, Figure.Width, Figure.Height);

    /// <summary>The figure (exposed for benchmarks).</summary>
    public static Plot Build(Evolution evolution)
    {
        var scenario = evolution.Dynamics.Scenario;
        var plot = Figure.New();
        var unit = DisplayUnits.For(Dimension.Time, [scenario.TotalDurationS]);
        var t = new double[evolution.Times.Length];
        for (int k = 0; k < t.Length; k++) t[k] = unit.From(evolution.Times[k]);
        double lo = Math.Log10(0.5), hi = lo;
        int colour = 0;
        var mechanical = evolution.ModeNames.Select((n, j) => (n, j)).Where(p => scenario.ModeNamed(p.n).Kind == ModeKind.Mechanical).ToArray();
        // Reused from mode to mode: the decimated series are copies.
        var (min, max) = (new double[t.Length], new double[t.Length]);
        foreach (var (name, j) in mechanical)
        {
            for (int k = 0; k < t.Length; k++)
            {
                min[k] = Math.Log10(Math.Max(evolution.Moments[k, j].VarMin, 1e-12));
                max[k] = Math.Log10(Math.Max(evolution.Moments[k, j].VarMax, 1e-12));
            }
            lo = Math.Min(lo, min.Min());
            hi = Math.Max(hi, max.Max());
            var color = Figure.Colour(colour++);
            string who = mechanical.Length > 1 ? name + " " : "";
            var (xa, ya) = Decimation.MinMax(t, min, Columns);
            var a = plot.Add.ScatterLine(xa, ya);
            a.Color = color;
            a.LineWidth = Figure.LineWidth;
            a.LegendText = $"{who}var_min (squeezed)";
            var (xb, yb) = Decimation.MinMax(t, max, Columns);
            var b = plot.Add.ScatterLine(xb, yb);
            b.Color = color;
            b.LineWidth = Figure.LineWidth;
            b.LinePattern = LinePattern.Dashed;
            b.LegendText = $"{who}var_max (anti-squeezed)";
        }
        double pad = 0.06 * Math.Max(hi - lo, 0.5);
        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            double start = unit.From(evolution.Dynamics.StageStarts[i]), end = start + unit.From(scenario.Stages[i].DurationS);
            var span = plot.Add.HorizontalSpan(start, end);
            span.FillStyle.Color = (i % 2 == 0 ? Figure.Colour(0) : Figure.Colour(3)).WithAlpha(0.07);
            span.LineStyle.Width = 0;
            var label = plot.Add.Text(scenario.Stages[i].Name, start, hi + 2 * pad);
            label.LabelFontSize = Figure.FontSize - 1;
            label.LabelFontColor = Figure.Ink;
            label.LabelAlignment = Alignment.UpperLeft;
            label.OffsetX = 4;
            // Neighbouring names one line apart, so short stages do not print over each other.
            label.OffsetY = i % 2 * (Figure.FontSize + 6);
        }
        var zero = plot.Add.HorizontalLine(Math.Log10(0.5));
        zero.Color = Figure.Ink;
        zero.LineWidth = 1;
        zero.LinePattern = LinePattern.Dotted;
        zero.LegendText = "zero-point (0.5)";

        double bottom = lo - pad, top = hi + 2.5 * pad;
        Ticks.Log(plot.Axes.Left, bottom, top);
        Ticks.Linear(plot.Axes.Bottom);
        plot.Axes.SetLimitsY(bottom, top);
        plot.Axes.SetLimitsX(0, unit.From(scenario.TotalDurationS));
        plot.XLabel($"time ({unit.Symbol})");
        plot.YLabel("quadrature variance (quanta)");
        plot.Title($"{scenario.Name}: squeezed and anti-squeezed variance");
        Figure.LegendOutside(plot);
        return plot;
    }
}

using ScottPlot;
using System.Globalization;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>variance.png/.svg: var_min and var_max of each mechanical mode against time on a log axis, zero-point line, named stages shaded.</summary>
public static class VariancePlot
{
    /// <summary>Renders the plot to PNG and SVG, each written atomically.</summary>
    public static void Save(Evolution evolution, string pngPath, string? svgPath = null)
    {
        AtomicFile.Write(pngPath, tmp => Build(evolution, patterns: true).SavePng(tmp, 1200, 700));
        // Skia's SVG backend cannot draw dash patterns (it prints a complaint instead), so the SVG uses widths.
        if (svgPath is not null) AtomicFile.Write(svgPath, tmp => Build(evolution, patterns: false).SaveSvg(tmp, 1200, 700));
    }

    private static Plot Build(Evolution evolution, bool patterns)
    {
        var scenario = evolution.Dynamics.Scenario;
        var plot = new Plot();
        double[] tms = evolution.Times.Select(t => t * 1e3).ToArray();
        double lo = Math.Log10(0.5), hi = Math.Log10(0.5);
        var palette = new ScottPlot.Palettes.Category10();
        int colour = 0;
        for (int j = 0; j < evolution.ModeNames.Length; j++)
        {
            if (scenario.ModeNamed(evolution.ModeNames[j]).Kind != ModeKind.Mechanical) continue;
            var min = new double[tms.Length];
            var max = new double[tms.Length];
            for (int k = 0; k < tms.Length; k++)
            {
                min[k] = Math.Log10(Math.Max(evolution.Moments[k, j].VarMin, 1e-12));
                max[k] = Math.Log10(Math.Max(evolution.Moments[k, j].VarMax, 1e-12));
            }
            lo = Math.Min(lo, min.Min());
            hi = Math.Max(hi, max.Max());
            var color = palette.GetColor(colour++);
            var a = plot.Add.ScatterLine(tms, min);
            a.Color = color;
            a.LineWidth = 2;
            a.LegendText = $"{evolution.ModeNames[j]} var_min";
            var b = plot.Add.ScatterLine(tms, max);
            b.Color = color;
            b.LineWidth = patterns ? 2 : 1;
            b.LinePattern = patterns ? LinePattern.Dashed : LinePattern.Solid;
            b.LegendText = $"{evolution.ModeNames[j]} var_max";
        }
        double pad = 0.08 * Math.Max(hi - lo, 0.5);
        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            double start = evolution.Dynamics.StageStarts[i] * 1e3, end = start + scenario.Stages[i].DurationS * 1e3;
            var span = plot.Add.HorizontalSpan(start, end);
            span.FillStyle.Color = (i % 2 == 0 ? Colors.SteelBlue : Colors.Orange).WithAlpha(0.08);
            span.LineStyle.Width = 0;
            var label = plot.Add.Text(scenario.Stages[i].Name, start, hi + pad);
            label.LabelFontSize = 13;
            label.LabelAlignment = Alignment.UpperLeft;
        }
        var zero = plot.Add.HorizontalLine(Math.Log10(0.5));
        zero.Color = Colors.Black;
        zero.LinePattern = patterns ? LinePattern.Dotted : LinePattern.Solid;
        zero.LegendText = "zero-point (0.5)";

        var ticks = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = y => Math.Pow(10, y).ToString("G3", CultureInfo.InvariantCulture),
        };
        plot.Axes.Left.TickGenerator = ticks;
        plot.Axes.SetLimitsY(lo - pad, hi + 2 * pad);
        plot.Axes.SetLimitsX(0, scenario.TotalDurationS * 1e3);
        plot.XLabel("time (ms)");
        plot.YLabel("quadrature variance (quanta, log scale)");
        plot.Title($"{scenario.Name}: squeezed and anti-squeezed variance");
        plot.ShowLegend(Alignment.LowerRight);
        return plot;
    }
}

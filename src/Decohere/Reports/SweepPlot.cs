using ScottPlot;
using System.Globalization;
using Decohere.Analyses.Sweeps;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>
/// sweep.png: one panel per metric, as a line against the varied parameter (one axis, or zipped axes against the
/// first) or as a heat map over two axes. Failed points are gaps (lines) or blank cells (heat maps).
/// </summary>
public static class SweepPlot
{
    /// <summary>True when a sweep of this shape can be plotted (one axis, zipped axes, or two axes).</summary>
    public static bool CanPlot(SweepDescription d) => d.Axes.Length == 1 || d.Zip || d.Axes.Length == 2;

    /// <summary>Renders the plot to PNG atomically; returns false (writing nothing) for more than two multiplied axes.</summary>
    public static bool Save(SweepDescription description, IReadOnlyList<SweepRow> rows, string scenarioName, string pngPath)
    {
        if (!CanPlot(description) || description.Metrics.Length == 0) return false;
        var sorted = rows.OrderBy(r => r.Point).ToArray();
        int panels = description.Metrics.Length;
        var plots = Enumerable.Range(0, panels)
            .Select(m => description.Axes.Length == 1 || description.Zip ? Line(description, sorted, m) : Map(description, sorted, m)).ToArray();
        plots[0].Title($"{scenarioName}: sweep of {string.Join(" × ", description.Axes.Select(a => a.Path))}");
        var multiplot = new Multiplot(plots[0]);
        foreach (var plot in plots.Skip(1)) multiplot.AddPlot(plot);
        AtomicFile.Write(pngPath, tmp => multiplot.SavePng(tmp, 1100, 520 * panels));
        return true;
    }

    private static Plot Line(SweepDescription d, SweepRow[] rows, int metric)
    {
        var axis = d.Axes[0];
        var plot = new Plot();
        double[] xs = rows.Select(r => axis.Log ? Math.Log10(r.Parameters[0]) : r.Parameters[0]).ToArray();
        double[] ys = rows.Select(r => r.Metrics[metric] ?? double.NaN).ToArray();
        var line = plot.Add.ScatterLine(xs, ys);
        line.LineWidth = 2;
        line.MarkerSize = rows.Length <= 60 ? 6 : 0;
        if (axis.Log) plot.Axes.Bottom.TickGenerator = LogTicks();
        plot.XLabel(axis.Column + (d.Zip && d.Axes.Length > 1 ? $" (zipped with {string.Join(", ", d.Axes.Skip(1).Select(a => a.Path))})" : ""));
        plot.YLabel(d.Metrics[metric].Column);
        plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = v => v.ToString("G4", CultureInfo.InvariantCulture) };
        return plot;
    }

    private static Plot Map(SweepDescription d, SweepRow[] rows, int metric)
    {
        // Point p = i·n₁ + j (first axis slowest): i along x, j along y. Cells are placed by index and labelled with
        // the values, so uneven lists and log ranges are drawn without distortion of the cell grid.
        int nx = d.Axes[0].Values.Length, ny = d.Axes[1].Values.Length;
        var z = new double[ny, nx];
        for (int i = 0; i < nx; i++)
            for (int j = 0; j < ny; j++)
                z[ny - 1 - j, i] = double.NaN;
        foreach (var r in rows)
        {
            int i = (int)(r.Point / ny), j = (int)(r.Point % ny);
            // Row 0 of the intensity array is drawn at the top.
            z[ny - 1 - j, i] = r.Metrics[metric] ?? double.NaN;
        }
        var plot = new Plot();
        var map = plot.Add.Heatmap(z);
        map.Colormap = new ScottPlot.Colormaps.Viridis();
        map.Position = new CoordinateRect(0, Math.Max(nx - 1, 1e-9), 0, Math.Max(ny - 1, 1e-9));
        var bar = plot.Add.ColorBar(map);
        bar.Label = d.Metrics[metric].Column;
        bar.Axis.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = v => v.ToString("G4", CultureInfo.InvariantCulture) };
        plot.Axes.Bottom.TickGenerator = IndexTicks(d.Axes[0].Values);
        plot.Axes.Left.TickGenerator = IndexTicks(d.Axes[1].Values);
        plot.XLabel(d.Axes[0].Column);
        plot.YLabel(d.Axes[1].Column);
        plot.Axes.SetLimits(-0.5, nx - 0.5, -0.5, ny - 0.5);
        return plot;
    }

    private static ScottPlot.TickGenerators.NumericManual IndexTicks(IReadOnlyList<double> values)
    {
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        int step = Math.Max(1, (int)Math.Ceiling(values.Count / 8.0));
        for (int i = 0; i < values.Count; i += step)
            ticks.AddMajor(i, values[i].ToString("G3", CultureInfo.InvariantCulture));
        return ticks;
    }

    private static ScottPlot.TickGenerators.NumericAutomatic LogTicks() => new()
    {
        MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
        IntegerTicksOnly = true,
        LabelFormatter = x => Math.Pow(10, x).ToString("G3", CultureInfo.InvariantCulture),
    };
}

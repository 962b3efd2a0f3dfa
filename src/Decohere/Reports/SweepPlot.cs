using ScottPlot;
using Decohere.Analyses.Sweeps;
using Decohere.Reports.Plotting;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>
/// sweep.png/.svg: one panel per metric, as a line against the varied parameter (one axis, or zipped axes against the
/// first) or as a heat map over two axes with the metric's natural contour (0 dB of squeezing, Re λ = 0, power ½).
/// Axes carry the parameters' names and units chosen from their values, log scales for log-spaced or decade-spanning
/// values. Failed points are gaps (lines) or blank cells (heat maps).
/// </summary>
public static class SweepPlot
{
    /// <summary>True when a sweep of this shape can be plotted (one axis, zipped axes, or two axes).</summary>
    public static bool CanPlot(SweepDescription d) => d.Axes.Length == 1 || d.Zip || d.Axes.Length == 2;

    /// <summary>Renders sweep.png and .svg at <paramref name="stem"/>; returns the paths, none for a shape it cannot plot.</summary>
    /// <param name="description">The sweep.</param>
    /// <param name="rows">Its rows.</param>
    /// <param name="scenarioName">Name in the title.</param>
    /// <param name="scenarioText">The template scenario's text, when known: tone couplings are then named by their sideband.</param>
    /// <param name="stem">Path without extension.</param>
    public static string[] Save(SweepDescription description, IReadOnlyList<SweepRow> rows, string scenarioName, string scenarioText, string stem)
    {
        if (!CanPlot(description) || description.Metrics.Length == 0) return [];
        Scenario? scenario = null;
        try
        {
            if (scenarioText.Length > 0) scenario = ScenarioLoader.Parse(scenarioText);
        }
        catch (ScenarioException)
        {
            // Labels fall back to the tone's index.
        }
        var sorted = rows.OrderBy(r => r.Point).ToArray();
        int panels = description.Metrics.Length;
        bool line = description.Axes.Length == 1 || description.Zip;
        var plots = Enumerable.Range(0, panels).Select(m => line ? Line(description, sorted, m, scenario) : Map(description, sorted, m, scenario)).ToArray();
        string varied = description.Zip && description.Axes.Length > 1
            ? string.Join(" with ", description.Axes.Select(a => QuantityLabels.For(a.Path, scenario).Name)) + " (varied together)"
            : string.Join(" and ", description.Axes.Select(a => QuantityLabels.For(a.Path, scenario).Name));
        plots[0].Title($"{scenarioName}: sweep of {varied}\n{plots[0].Axes.Title.Label.Text}");
        var multiplot = new Multiplot();
        multiplot.Reset(plots[0]);
        foreach (var plot in plots.Skip(1)) multiplot.AddPlot(plot);
        return Figure.Save(multiplot, stem, 1200, 560 * panels);
    }

    // A numeric axis for a varied parameter: display unit from its values, log10 coordinates for log ranges or decades.
    private sealed record ParameterAxis(QuantityLabel Label, DisplayUnit Unit, bool Log)
    {
        public static ParameterAxis Of(SweepDescription.Axis axis, Scenario? scenario)
        {
            var label = QuantityLabels.For(axis.Path, scenario);
            return new(label, label.UnitFor(axis.Values), axis.Log || Ticks.SpansDecades(axis.Values));
        }

        public double At(double si) => Log ? Math.Log10(Unit.From(si)) : Unit.From(si);

        public void Apply(IAxis axis, double[] coordinates)
        {
            axis.Label.Text = Label.Label(Unit);
            if (Log) Ticks.Log(axis, coordinates.Min(), coordinates.Max());
            else Ticks.Linear(axis);
        }
    }

    private static Plot Line(SweepDescription d, SweepRow[] rows, int metric, Scenario? scenario)
    {
        var axis = ParameterAxis.Of(d.Axes[0], scenario);
        var label = QuantityLabels.For(d.Metrics[metric].Spec, scenario);
        var unit = label.UnitFor(rows.Select(r => r.Metrics[metric] ?? double.NaN));
        var plot = Figure.New();
        double[] xs = [.. rows.Select(r => axis.At(r.Parameters[0]))];
        double[] ys = [.. rows.Select(r => r.Metrics[metric] is { } v ? unit.From(v) : double.NaN)];
        var series = plot.Add.ScatterLine(xs, ys);
        series.LineWidth = Figure.LineWidth;
        series.Color = Figure.Colour(0);
        series.MarkerSize = rows.Length <= 60 ? 7 : 0;
        series.MarkerColor = Figure.Colour(0);
        if (Level(d.Metrics[metric].Spec) is { } level && ys.Any(double.IsFinite) && ys.Where(double.IsFinite).Min() <= level && ys.Where(double.IsFinite).Max() >= level)
        {
            var guide = plot.Add.HorizontalLine(level);
            guide.Color = Figure.Ink;
            guide.LineWidth = 1;
            guide.LinePattern = LinePattern.Dotted;
        }
        axis.Apply(plot.Axes.Bottom, xs);
        if (d.Zip && d.Axes.Length > 1)
            plot.Axes.Bottom.Label.Text += "; with " + string.Join(", ", d.Axes.Skip(1).Select(a =>
            {
                var other = ParameterAxis.Of(a, scenario);
                return $"{other.Label.Name} {other.Unit.Format(a.Values[0], 3)} … {other.Unit.Format(a.Values[^1], 3)}";
            }));
        Ticks.Linear(plot.Axes.Left);
        plot.YLabel(label.Label(unit));
        plot.Title(label.Name);
        return plot;
    }

    private static Plot Map(SweepDescription d, SweepRow[] rows, int metric, Scenario? scenario)
    {
        // Point p = i·n₁ + j (first axis slowest): i along x, j along y.
        var ax = ParameterAxis.Of(d.Axes[0], scenario);
        var ay = ParameterAxis.Of(d.Axes[1], scenario);
        int nx = d.Axes[0].Values.Length, ny = d.Axes[1].Values.Length;
        double[] x = [.. d.Axes[0].Values.Select(ax.At)], y = [.. d.Axes[1].Values.Select(ay.At)];
        var label = QuantityLabels.For(d.Metrics[metric].Spec, scenario);
        var unit = label.UnitFor(rows.Select(r => r.Metrics[metric] ?? double.NaN));
        var z = new double[nx, ny];
        for (int i = 0; i < nx; i++)
            for (int j = 0; j < ny; j++)
                z[i, j] = double.NaN;
        foreach (var r in rows)
            z[(int)(r.Point / ny), (int)(r.Point % ny)] = r.Metrics[metric] is { } v ? unit.From(v) : double.NaN;
        var plot = Figure.New();
        HeatMap.Add(plot, x, y, z, label.Label(unit));
        if (Level(d.Metrics[metric].Spec) is { } level)
            HeatMap.Contour(plot, x, y, z, level, LevelName(d.Metrics[metric].Spec, level));
        Legends.BelowIfAny(plot);
        ax.Apply(plot.Axes.Bottom, x);
        ay.Apply(plot.Axes.Left, y);
        plot.Title(label.Name);
        return plot;
    }

    // The level that separates good from bad for a metric, in its display unit (dB, s⁻¹ and probabilities have unit factor 1).
    private static double? Level(string spec) => spec.Split(':')[0] switch
    {
        "steady_squeezing_db" or "end_squeezing_db" or "max_re_lambda" => 0,
        "resolution_probability" => 0.5,
        _ => null,
    };

    private static string LevelName(string spec, double level) => spec.Split(':')[0] switch
    {
        "max_re_lambda" => "stability boundary (Re λ = 0)",
        "resolution_probability" => "power ½",
        _ => "0 dB (zero-point)",
    };
}

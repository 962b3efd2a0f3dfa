using ScottPlot;

namespace Decohere.Reports.Plotting;

/// <summary>
/// A heat map on numeric axes: each grid point is a cell reaching halfway to its neighbours in plot coordinates (log10
/// on a log axis), so uneven and log-spaced grids are drawn where their values lie; missing values are blank cells. With a
/// colour bar titled by the quantity and optional contour lines.
/// </summary>
public static class HeatMap
{
    /// <summary>Draws z[i, j] at (x[i], y[j]) (plot coordinates); returns the colour range used.</summary>
    public static ScottPlot.Range Add(Plot plot, double[] x, double[] y, double[,] z, string colourLabel, ScottPlot.Range? range = null, bool colourBar = true)
    {
        var finite = z.Cast<double>().Where(double.IsFinite).DefaultIfEmpty(0).ToArray();
        var r = range ?? new ScottPlot.Range(finite.Min(), finite.Max() > finite.Min() ? finite.Max() : finite.Min() + 1);
        IColormap colormap = new ScottPlot.Colormaps.Viridis();
        double[] xe = Edges(x), ye = Edges(y);
        var colours = new Color?[x.Length, y.Length];
        for (int i = 0; i < x.Length; i++)
            for (int j = 0; j < y.Length; j++)
                if (double.IsFinite(z[i, j])) colours[i, j] = colormap.GetColor(Math.Clamp((z[i, j] - r.Min) / (r.Max - r.Min), 0, 1));
        plot.Add.Plottable(new Cells(xe, ye, colours));
        plot.Axes.SetLimits(xe[0], xe[^1], ye[0], ye[^1]);
        if (!colourBar) return r;
        // The colour bar needs a colour source: a heat map of the range's two ends, drawn nowhere.
        var source = plot.Add.Heatmap(new double[,] { { r.Min, r.Max } });
        source.Colormap = colormap;
        source.ManualRange = r;
        source.IsVisible = false;
        var bar = plot.Add.ColorBar(source);
        bar.Label = "";
        bar.Axis.Label.Text = colourLabel;
        bar.Axis.Label.FontSize = Figure.FontSize + 1;
        bar.Axis.Label.Bold = false;
        bar.Axis.TickLabelStyle.FontSize = Figure.FontSize;
        bar.Axis.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = Ticks.Label, TargetTickCount = 6 };
        return r;
    }

    /// <summary>
    /// Draws the contour of z at <paramref name="level"/> as a white line cased in black (readable on every part of the
    /// colour map, and in the legend); returns false when z never crosses the level.
    /// </summary>
    public static bool Contour(Plot plot, double[] x, double[] y, double[,] z, double level, string legend)
    {
        var segments = Contours.Segments(x, y, z, level);
        foreach (var (colour, width) in new[] { (Figure.Ink, 5f), (Colors.White, 2f) })
            foreach (var (x1, y1, x2, y2) in segments)
            {
                var line = plot.Add.Line(x1, y1, x2, y2);
                line.Color = colour;
                line.LineWidth = width;
                line.MarkerSize = 0;
            }
        if (segments.Count > 0)
        {
            // One legend entry: the casing's colour, which shows on the white legend box.
            var entry = plot.Add.Line(segments[0].X1, segments[0].Y1, segments[0].X1, segments[0].Y1);
            entry.Color = Figure.Ink;
            entry.LineWidth = 4;
            entry.MarkerSize = 0;
            entry.LegendText = legend;
        }
        return segments.Count > 0;
    }

    /// <summary>
    /// The cells as one plottable: each a rectangle filled and outlined (half a pixel, so neighbours leave no seam) in its
    /// colour, drawn in one pass. As separate rectangles, ScottPlot's work per plottable cost more than the drawing.
    /// </summary>
    private sealed class Cells(double[] xe, double[] ye, Color?[,] colours) : IPlottable
    {
        public bool IsVisible { get; set; } = true;

        public IAxes Axes { get; set; } = new Axes();

        public IEnumerable<LegendItem> LegendItems => [];

        public AxisLimits GetAxisLimits() => new(xe[0], xe[^1], ye[0], ye[^1]);

        public void Render(RenderPack rp)
        {
            using var paint = new SkiaSharp.SKPaint { IsAntialias = true, Style = SkiaSharp.SKPaintStyle.StrokeAndFill, StrokeWidth = 0.5f };
            for (int i = 0; i < xe.Length - 1; i++)
                for (int j = 0; j < ye.Length - 1; j++)
                {
                    if (colours[i, j] is not { } colour) continue;
                    paint.Color = colour.ToSKColor();
                    rp.Canvas.DrawRect(Axes.GetPixelRect(new CoordinateRect(xe[i], xe[i + 1], ye[j], ye[j + 1])).ToSKRect(), paint);
                }
        }
    }

    // Cell edges halfway between neighbouring points; the outer cells as wide as their inner half.
    private static double[] Edges(double[] c)
    {
        if (c.Length == 1) return [c[0] - 0.5, c[0] + 0.5];
        var e = new double[c.Length + 1];
        for (int i = 1; i < c.Length; i++) e[i] = (c[i - 1] + c[i]) / 2;
        e[0] = c[0] - (e[1] - c[0]);
        e[^1] = c[^1] + (c[^1] - e[^2]);
        return e;
    }
}

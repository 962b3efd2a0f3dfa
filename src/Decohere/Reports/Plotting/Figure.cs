using ScottPlot;
using Decohere.IO;

namespace Decohere.Reports.Plotting;

/// <summary>
/// The project's look and the one way figures are saved: a palette readable in print and by colour-blind readers
/// (P. Tol's "bright" scheme, personal.sron.nl/~pault), DejaVu Sans, 2-px data lines, light grid, legends beside the data
/// instead of over it, and every figure as PNG and SVG, each written atomically.
/// </summary>
public static class Figure
{
    /// <summary>Series colours, in order.</summary>
    public static readonly Color[] Palette =
    [
        Color.FromHex("#4477AA"), Color.FromHex("#EE6677"), Color.FromHex("#228833"), Color.FromHex("#CCBB44"),
        Color.FromHex("#66CCEE"), Color.FromHex("#AA3377"), Color.FromHex("#BBBBBB"),
    ];

    /// <summary>Reference lines (zero-point, thresholds) and text.</summary>
    public static readonly Color Ink = Color.FromHex("#222222");

    /// <summary>Guides (±2σ, secondary references).</summary>
    public static readonly Color Guide = Color.FromHex("#888888");

    /// <summary>Width of data lines (px).</summary>
    public const float LineWidth = 2f;

    /// <summary>Base font size (tick labels); axis labels and titles are larger.</summary>
    public const float FontSize = 15f;

    /// <summary>Default figure size (px).</summary>
    public const int Width = 1200, Height = 720;

    /// <summary>A series colour.</summary>
    public static Color Colour(int index) => Palette[index % Palette.Length];

    /// <summary>A new plot in the project's style.</summary>
    public static Plot New()
    {
        var plot = new Plot();
        Style(plot);
        return plot;
    }

    /// <summary>Applies the project's style to a plot (fonts, grid, frame).</summary>
    public static void Style(Plot plot)
    {
        plot.Font.Set("DejaVu Sans");
        plot.FigureBackground.Color = Colors.White;
        plot.DataBackground.Color = Colors.White;
        plot.Grid.MajorLineColor = Color.FromHex("#E6E6E6");
        plot.Grid.MinorLineColor = Colors.Transparent;
        foreach (var axis in plot.Axes.GetAxes())
        {
            axis.TickLabelStyle.FontSize = FontSize;
            axis.Label.FontSize = FontSize + 2;
            axis.Label.Bold = false;
            axis.FrameLineStyle.Color = Ink;
            axis.MajorTickStyle.Color = Ink;
            axis.MinorTickStyle.Color = Ink;
        }
        plot.Axes.Title.Label.FontSize = FontSize + 3;
        plot.Axes.Title.Label.Bold = false;
        plot.Legend.FontSize = FontSize - 1;
        plot.Legend.OutlineColor = Color.FromHex("#CCCCCC");
    }

    /// <summary>Shows the legend to the right of the data area (never over the data).</summary>
    public static void LegendOutside(Plot plot)
    {
        plot.ShowLegend(Edge.Right);
        plot.Legend.FontSize = FontSize - 1;
    }

    /// <summary>Writes the plot as <paramref name="stem"/>.png and .svg; returns both paths.</summary>
    public static string[] Save(Plot plot, string stem, int width = Width, int height = Height) =>
        new FigureOutput(new Multiplot(plot), stem, width, height).Write();

    /// <summary>Writes a (multi-panel) figure as PNG and SVG; returns both paths.</summary>
    public static string[] Save(Multiplot multiplot, string stem, int width, int height) => new FigureOutput(multiplot, stem, width, height).Write();
}

/// <summary>
/// A figure ready to be written as <c>Stem.png</c> and <c>Stem.svg</c>, each atomically. The two files can be written
/// apart (the PNG of one figure while another's SVG is written), but Skia numbers the clip paths of every SVG in one
/// count per process, so an SVG's bytes depend on the SVGs drawn before it: write SVGs one at a time, in a fixed order.
/// </summary>
public sealed record FigureOutput(Multiplot Plot, string Stem, int Width, int Height)
{
    // The pixels ScottPlot's own PNG export draws (RGBA, premultiplied), written by Png; a figure with partly transparent
    // pixels (none of ours) goes to Skia's encoder instead, with the "up" row filter and zlib's level 3 (about 5 ms for a
    // 1200 × 720 figure, where its default, all five filters tried on every row at level 6, took 50–90 ms).
    private static readonly SkiaSharp.SKPngEncoderOptions PngOptions = new(SkiaSharp.SKPngEncoderFilterFlags.Up, zLibLevel: 3);

    /// <summary>Writes the PNG, then the SVG; returns both paths.</summary>
    public string[] Write() => [WritePng(), WriteSvg()];

    /// <summary>Writes <c>Stem.png</c>; returns its path.</summary>
    public string WritePng()
    {
        string png = Stem + ".png";
        // The pixels live in a pooled array, so figures drawn one after another reuse memory already touched instead of
        // faulting in a fresh 3–6 MB surface each (about a thousand page faults a figure).
        int rowBytes = 4 * Width;
        var buffer = System.Buffers.ArrayPool<byte>.Shared.Rent(rowBytes * Height);
        try
        {
            AtomicFile.Write(png, tmp =>
            {
                var info = new SkiaSharp.SKImageInfo(Width, Height, SkiaSharp.SKColorType.Rgba8888, SkiaSharp.SKAlphaType.Premul);
                unsafe
                {
                    fixed (byte* pixels = buffer)
                    {
                        using (var surface = SkiaSharp.SKSurface.Create(info, (IntPtr)pixels, rowBytes)
                            ?? throw new InvalidOperationException("no surface to draw the figure on"))
                        {
                            surface.Canvas.Clear(SkiaSharp.SKColors.Transparent);
                            Plot.Render(surface);
                            surface.Canvas.Flush();
                        }
                        using var stream = File.Create(tmp);
                        if (Png.TryWrite(buffer.AsSpan(0, rowBytes * Height), Width, Height, rowBytes, stream)) return;
                        using var pixmap = new SkiaSharp.SKPixmap(info, (IntPtr)pixels, rowBytes);
                        using var data = pixmap.Encode(PngOptions) ?? throw new InvalidOperationException("the figure could not be encoded as PNG");
                        data.SaveTo(stream);
                    }
                }
            });
        }
        finally
        {
            System.Buffers.ArrayPool<byte>.Shared.Return(buffer);
        }
        return png;
    }

    /// <summary>Writes <c>Stem.svg</c>; returns its path.</summary>
    public string WriteSvg()
    {
        string svg = Stem + ".svg";
        // Skia's SVG backend cannot draw dash patterns (it prints a complaint instead of drawing): in the SVG, patterned
        // lines are drawn solid and thinner, then restored.
        var patterned = Plot.GetPlots().SelectMany(p => p.GetPlottables()).OfType<IHasLine>()
            .Where(l => l.LinePattern.Name != LinePattern.Solid.Name).Select(l => (Line: l, l.LinePattern, l.LineWidth)).ToArray();
        foreach (var (line, _, width0) in patterned)
        {
            line.LinePattern = LinePattern.Solid;
            line.LineWidth = Math.Max(1, width0 / 2);
        }
        try
        {
            AtomicFile.Write(svg, tmp =>
            {
                // Skia's SVG writer puts the document down in thousands of small pieces: kept in native memory and written
                // once, instead of each piece calling back into a managed stream.
                using var memory = new SkiaSharp.SKDynamicMemoryWStream();
                using (var canvas = SkiaSharp.SKSvgCanvas.Create(new SkiaSharp.SKRect(0, 0, Width, Height), memory))
                    Plot.Render(canvas, new PixelRect(0, Width, Height, 0));
                using var data = memory.DetachAsData();
                using var stream = File.Create(tmp);
                data.SaveTo(stream);
            });
        }
        finally
        {
            foreach (var (line, pattern, width0) in patterned)
            {
                line.LinePattern = pattern;
                line.LineWidth = width0;
            }
        }
        return svg;
    }
}

/// <summary>A sequential colour map from near-white to the palette's blue, for counts (low counts light, so empty bins read as paper).</summary>
public sealed class CountsColormap : IColormap
{
    /// <inheritdoc/>
    public string Name => "counts";

    /// <inheritdoc/>
    public Color GetColor(double normalizedIntensity)
    {
        double t = double.IsFinite(normalizedIntensity) ? Math.Clamp(normalizedIntensity, 0, 1) : 0;
        // From #DCE8F5 to #0B2E59 (dark blue), linear in sRGB: enough for a monotone lightness ramp.
        byte Mix(byte a, byte b) => (byte)Math.Round(a + (b - a) * t);
        return new Color(Mix(0xDC, 0x0B), Mix(0xE8, 0x2E), Mix(0xF5, 0x59));
    }
}

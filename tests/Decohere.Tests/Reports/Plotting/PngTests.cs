using Decohere.Reports.Plotting;
using ScottPlot;
using SkiaSharp;

namespace Decohere.Tests.Reports.Plotting;

/// <summary>The PNG writer's files decode, with an independent decoder (Skia's libpng), to exactly the pixels written.</summary>
public class PngTests
{
    private static byte[] Encode(byte[] rgba, int width, int height, int rowBytes = 0)
    {
        using var stream = new MemoryStream();
        Assert.True(Png.TryWrite(rgba, width, height, rowBytes == 0 ? 4 * width : rowBytes, stream));
        return stream.ToArray();
    }

    private static byte[] Decode(byte[] png, out int width, out int height)
    {
        using var data = SKData.CreateCopy(png);
        using var codec = SKCodec.Create(data);
        Assert.NotNull(codec);
        var info = new SKImageInfo(codec.Info.Width, codec.Info.Height, SKColorType.Rgba8888, SKAlphaType.Unpremul);
        using var bitmap = new SKBitmap(info);
        Assert.Equal(SKCodecResult.Success, codec.GetPixels(info, bitmap.GetPixels()));
        (width, height) = (info.Width, info.Height);
        return bitmap.GetPixelSpan().ToArray();
    }

    // The colour type in the IHDR chunk (PNG specification, sec. 11.2.2): byte 25 of the file.
    private static int ColourType(byte[] png) => png[25];

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void RandomPixelsDecodeExactly(bool clearPixels)
    {
        // Random bytes defeat the row filter's runs: every byte of every row must come back (odd sizes exercise the
        // vector loops' tails). Opaque pixels give RGB; with some fully transparent ones (premultiplied: all zero), RGBA.
        var random = new Random(11);
        foreach (var (width, height) in new[] { (1, 1), (37, 23), (300, 7) })
        {
            var rgba = new byte[4 * width * height];
            random.NextBytes(rgba);
            for (int k = 3; k < rgba.Length; k += 4) rgba[k] = 255;
            if (clearPixels)
                for (int p = 0; p < width * height; p += 3) rgba.AsSpan(4 * p, 4).Clear();
            var png = Encode(rgba, width, height);
            Assert.Equal(clearPixels ? 6 : 2, ColourType(png));
            var decoded = Decode(png, out int w, out int h);
            Assert.Equal((width, height), (w, h));
            Assert.Equal(rgba, decoded);
        }
    }

    [Fact]
    public void RowsPaddedPastTheirPixelsAreRead()
    {
        var random = new Random(2);
        int width = 9, height = 5, rowBytes = 4 * width + 12;
        var padded = new byte[rowBytes * height];
        random.NextBytes(padded);
        var rgba = new byte[4 * width * height];
        for (int y = 0; y < height; y++)
        {
            for (int x = 0; x < width; x++) padded[y * rowBytes + 4 * x + 3] = 255;
            padded.AsSpan(y * rowBytes, 4 * width).CopyTo(rgba.AsSpan(4 * width * y));
        }
        Assert.Equal(rgba, Decode(Encode(padded, width, height, rowBytes), out _, out _));
    }

    [Fact]
    public void FileHasTheSignatureAndEndsWithTheStandardEndChunk()
    {
        // PNG specification (W3C, 2nd ed.), sec. 5.2: the eight-byte signature; every PNG file ends with the empty IEND chunk,
        // whose CRC-32 is AE 42 60 82 (sec. 5.3; the value is recalled from memory and found in every PNG file).
        var png = Encode([.. Enumerable.Repeat((byte)255, 4 * 5 * 3)], 5, 3);
        Assert.Equal(new byte[] { 137, 80, 78, 71, 13, 10, 26, 10 }, png[..8]);
        Assert.Equal(new byte[] { 0, 0, 0, 0, 0x49, 0x45, 0x4E, 0x44, 0xAE, 0x42, 0x60, 0x82 }, png[^12..]);
    }

    [Fact]
    public void TranslucentPixelsAreLeftToTheRenderer()
    {
        var rgba = Enumerable.Repeat((byte)255, 4 * 4 * 4).ToArray();
        rgba[4 * 9 + 3] = 128;
        using var stream = new MemoryStream();
        Assert.False(Png.TryWrite(rgba, 4, 4, 16, stream));
        Assert.Equal(0, stream.Length);
    }

    [Fact]
    public void FiguresDecodeToThePixelsSkiasOwnEncoderKeeps()
    {
        // Drawn figures (antialiased lines, text, fills; a grid of panels with an empty cell) written by both encoders: the
        // two files decode to equal pixels.
        var plot = Figure.New();
        plot.Add.Scatter(new double[] { 0, 1, 2, 3 }, new double[] { 1, 3, 2, 4 });
        plot.Title("variance");
        var panels = new Multiplot();
        panels.Reset(Figure.New());
        panels.AddPlot(Figure.New());
        panels.AddPlot(Figure.New());
        panels.Layout = new ScottPlot.MultiplotLayouts.Grid(2, 2);
        foreach (var (figure, colourType) in new[] { (new Multiplot(plot), 2), (panels, 6) })
        {
            using var surface = SKSurface.Create(new SKImageInfo(320, 200, SKColorType.Rgba8888, SKAlphaType.Premul));
            figure.Render(surface);
            using var image = surface.Snapshot();
            using var pixels = image.PeekPixels()!;
            using var skia = pixels.Encode(new SKPngEncoderOptions(SKPngEncoderFilterFlags.AllFilters, 6))!;
            var ours = Encode(pixels.GetPixelSpan().ToArray(), 320, 200, pixels.RowBytes);
            Assert.Equal(colourType, ColourType(ours));
            Assert.Equal(Decode(skia.ToArray(), out _, out _), Decode(ours, out _, out _));
        }
    }
}

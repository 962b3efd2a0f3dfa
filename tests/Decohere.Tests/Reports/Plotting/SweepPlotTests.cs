using System.Text.RegularExpressions;
using Decohere.Analyses.Sweeps;
using Decohere.Reports;
using Decohere.Scenarios;
using SkiaSharp;

namespace Decohere.Tests.Reports.Plotting;

/// <summary>The sweep's heat maps, read back: the PNG by Skia's decoder, the SVG as text.</summary>
public class SweepPlotTests
{
    [Theory]
    [InlineData("thermal_decoherence_rate")]                     // no level, so no contour and no legend
    [InlineData("steady_squeezing_db:squeeze")]                  // a 0 dB contour where the grid crosses it
    [InlineData("thermal_decoherence_rate,max_re_lambda:squeeze")] // two panels
    public async Task HeatMapsAreDrawnInBothFiles(string metrics)
    {
        var sweep = Sweep.Parse(ScenarioLoader.Demo(),
            ["stages.squeeze.tones[1].coupling=0.1kHz:24kHz:6", "modes.drum.bath.temperature=5mK:100mK:5:log"], false, metrics);
        var result = await SweepAnalysis.SolveAsync(sweep, new SweepSettings());
        string stem = Path.Combine(TestPaths.NewTempDirectory(), "sweep");
        var paths = SweepPlot.Save(result.Description, result.Rows, "demo", result.Provenance.ScenarioText, stem);
        Assert.Equal([stem + ".png", stem + ".svg"], paths);

        // The cells fill most of each panel: far more than the title and axes would colour on white paper.
        using var bitmap = SKBitmap.Decode(paths[0]);
        long coloured = 0;
        for (int y = 0; y < bitmap.Height; y += 4)
            for (int x = 0; x < bitmap.Width; x += 4)
                if (bitmap.GetPixel(x, y) is var c && (c.Red < 200 || c.Green < 200 || c.Blue < 200)) coloured++;
        double share = coloured / ((bitmap.Width / 4.0) * (bitmap.Height / 4.0));
        Assert.True(share > 0.3, $"{share:P0} of the PNG is coloured");

        // Every one of the 30 cells of every panel is a shape of the SVG.
        int panels = result.Description.Metrics.Length;
        int shapes = Regex.Matches(File.ReadAllText(paths[1]), "<(path|rect)\\b").Count;
        Assert.True(shapes >= 30 * panels, $"{shapes} shapes in the SVG");
    }
}

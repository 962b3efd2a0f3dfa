using ScottPlot;
using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Spectra;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>Writes spectrum.parquet, spectrum.json and spectrum.png/.svg, each atomically.</summary>
public sealed class SpectrumReport : IReport<SpectrumResult>
{
    /// <summary>
    /// Columns of spectrum.parquet: one row per frequency per spectrum. frequency_hz is the offset from the mode's own
    /// frequency (ordinary Hz); tone_offset_hz the offset from the probing tone (null except for probes).
    /// </summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.Double("frequency_hz"), ColumnSpec.String("mode"), ColumnSpec.String("field"), ColumnSpec.NullableDouble("tone_offset_hz"),
        ColumnSpec.Double("s_xx"), ColumnSpec.Double("s_pp"), ColumnSpec.Double("s_normal"), ColumnSpec.Double("s_antinormal"),
    ];

    /// <summary>The field column's text: mode, output, or probe:K for tone K probing alone.</summary>
    public static string FieldName(Spectrum s) => s.Field switch
    {
        SpectrumField.Mode => "mode",
        SpectrumField.Output => "output",
        _ => $"probe:{s.Tone}",
    };

    /// <inheritdoc/>
    public Task<IReadOnlyList<string>> WriteAsync(SpectrumResult result, string directory, CancellationToken cancel = default) =>
        LabReportFiles.Write(directory, "spectrum", path => WriteTable(result, path, cancel), () => Json(result), () => Plot(result), cancel);

    private static async Task WriteTable(SpectrumResult result, string path, CancellationToken cancel)
    {
        int count = result.FrequenciesHz.Length, rows = count * result.Spectra.Length;
        var f = new double[rows];
        var mode = new string[rows];
        var field = new string[rows];
        var offset = new double?[rows];
        var sxx = new double[rows];
        var spp = new double[rows];
        var normal = new double[rows];
        var anti = new double[rows];
        int r = 0;
        foreach (var s in result.Spectra)
            for (int k = 0; k < count; k++, r++)
            {
                f[r] = result.FrequenciesHz[k];
                mode[r] = s.Mode;
                field[r] = FieldName(s);
                offset[r] = s.ToneOffsetHz is { } o ? f[r] - o : null;
                sxx[r] = s.Sxx[k];
                spp[r] = s.Spp[k];
                normal[r] = s.Normal[k];
                anti[r] = s.Antinormal[k];
            }
        var keys = new Dictionary<string, string>(result.Provenance.ToKeyValues())
        {
            ["decohere.spectrum.stage"] = result.Stage,
            ["decohere.spectrum.units"] = "field=mode: quanta/Hz (∫ s_xx df = var_x); field=output or probe:K: quanta (photons per second per Hz, vacuum ½ in s_xx)",
            ["decohere.spectrum.efficiency"] = result.Settings.Efficiency.ToString("R", CultureInfo.InvariantCulture),
        };
        await ParquetTable.WriteAsync(path, Columns, [f, mode, field, offset, sxx, spp, normal, anti], keys, cancel: cancel);
    }

    /// <summary>The content of spectrum.json.</summary>
    public static JsonObject Json(SpectrumResult result)
    {
        var root = SummaryJson.ProvenanceRoot(result.Provenance);
        root["stage"] = result.Stage;
        root["efficiency"] = result.Settings.Efficiency;
        root["frequency_span_hz"] = SummaryJson.Number(result.FrequenciesHz[^1]);
        root["method"] = "linear response: S(ω) = (iω + A)⁻¹ D (−iω + Aᵀ)⁻¹ symmetrised, ∫ S df = V; output a_out = a_in − √κ a then transmission η";
        root["modes"] = new JsonObject(result.Modes.Select(m => KeyValuePair.Create<string, JsonNode?>(m.Mode, new JsonObject
        {
            ["kind"] = m.Kind == ModeKind.Cavity ? "cavity" : "mechanical",
            ["var_x"] = SummaryJson.Number(m.VarX),
            ["var_p"] = SummaryJson.Number(m.VarP),
            ["occupancy"] = SummaryJson.Number(m.Occupancy),
            ["integral_s_xx"] = SummaryJson.Number(m.IntegralSxx),
            ["integral_s_pp"] = SummaryJson.Number(m.IntegralSpp),
            ["integral_s_normal"] = SummaryJson.Number(m.IntegralNormal),
            ["integral_s_antinormal"] = SummaryJson.Number(m.IntegralAntinormal),
        })));
        root["sidebands"] = new JsonArray([.. result.Sidebands.Select(s => (JsonNode)new JsonObject
        {
            ["tone"] = s.Tone,
            ["cavity"] = s.Cavity,
            ["mechanical"] = s.Mechanical,
            ["sideband"] = s.Sideband == Sideband.Red ? "red" : "blue",
            ["coupling_hz"] = s.CouplingHz,
            ["measurement_rate_per_s"] = SummaryJson.Number(s.RatePerS),
            ["power_photons_per_s"] = SummaryJson.Number(s.PowerPerS),
            ["mechanical_occupancy_while_probing"] = SummaryJson.Number(s.MechanicalOccupancy),
        })]);
        root["asymmetry"] = new JsonArray([.. result.Asymmetries.Select(a => (JsonNode)new JsonObject
        {
            ["mechanical"] = a.Mechanical,
            ["red_tone"] = a.RedTone,
            ["blue_tone"] = a.BlueTone,
            ["ratio"] = SummaryJson.Number(a.Ratio),
            ["naive_occupancy"] = a.NaiveOccupancy is { } n ? SummaryJson.Number(n) : null,
            ["true_occupancy"] = SummaryJson.Number(a.TrueOccupancy),
        })]);
        root["warnings"] = SummaryJson.Strings(result.Warnings);
        return root;
    }

    private static Plot Plot(SpectrumResult result)
    {
        var plot = new Plot();
        const int MaxModes = 8;
        var all = result.Spectra.Where(s => s.Field == SpectrumField.Mode).ToArray();
        // A legend of more than a few modes hides the lines: the table has them all.
        var modes = all.Take(MaxModes).ToArray();
        // A mode's quadrature spectra are even in the offset, so the positive side on a log axis shows a narrow mechanical line
        // and a wide cavity together, from the grid's first offset to ten of the widest half widths.
        double width = modes.Select(s => HalfWidth(result.FrequenciesHz, s.Sxx)).DefaultIfEmpty(1).Max();
        double limit = Math.Min(10 * width, result.FrequenciesHz[^1]);
        var keep = Enumerable.Range(0, result.FrequenciesHz.Length).Where(k => result.FrequenciesHz[k] > 0 && result.FrequenciesHz[k] <= limit).ToArray();
        double[] xs = [.. keep.Select(k => Math.Log10(result.FrequenciesHz[k]))];
        var palette = new ScottPlot.Palettes.Category10();
        double lo = double.PositiveInfinity, hi = double.NegativeInfinity;
        for (int i = 0; i < modes.Length; i++)
        {
            var color = palette.GetColor(i);
            foreach (var (values, name, dashed) in new[] { (modes[i].Sxx, "s_xx", false), (modes[i].Spp, "s_pp", true) })
            {
                double[] ys = [.. keep.Select(k => Math.Log10(Math.Max(values[k], 1e-300)))];
                lo = Math.Min(lo, ys.Min());
                hi = Math.Max(hi, ys.Max());
                var line = plot.Add.ScatterLine(xs, ys);
                line.Color = color;
                line.LineWidth = 2;
                if (dashed) line.LinePattern = LinePattern.Dashed;
                line.LegendText = $"{modes[i].Mode} {name}";
            }
        }
        plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = y => Math.Pow(10, y).ToString("G3", CultureInfo.InvariantCulture),
        };
        if (double.IsFinite(lo) && double.IsFinite(hi))
        {
            // Six decades below the highest peak are enough to see every line and the cavity's shoulder.
            lo = Math.Max(lo, hi - 6);
            double pad = 0.05 * Math.Max(hi - lo, 1);
            plot.Axes.SetLimitsY(lo - pad, hi + pad);
        }
        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            IntegerTicksOnly = true,
            LabelFormatter = x => Quantity.Format(Math.Pow(10, x), Dimension.Frequency, 3),
        };
        plot.XLabel("offset from the mode's frequency (log scale; the spectra are even in the offset)");
        plot.YLabel("symmetrised quadrature spectrum (quanta/Hz, log scale)");
        plot.Title($"{result.Scenario.Name}: stationary spectra in stage '{result.Stage}'{(all.Length > MaxModes ? $" (first {MaxModes} of {all.Length} modes)" : "")}");
        plot.ShowLegend(Alignment.UpperRight);
        return plot;
    }

    // Outermost offset at which the spectrum is still at half its maximum: the half width of a line, or of the shoulders of
    // a line with a dip (a cavity whose noise is cancelled at its centre).
    private static double HalfWidth(IReadOnlyList<double> f, IReadOnlyList<double> s)
    {
        double half = s.Max() / 2, width = 0;
        for (int k = 0; k < s.Count; k++) if (s[k] >= half) width = Math.Max(width, Math.Abs(f[k]));
        return Math.Max(width, 1e-300);
    }
}

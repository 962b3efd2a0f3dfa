using ScottPlot;
using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Tolerance;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>
/// Writes tolerance.parquet (added_noise, shots, power, power_mc, power_mc_err), tolerance.json and the heat map
/// tolerance.png with the target-power curve, each atomically.
/// </summary>
public sealed class ToleranceReport : IReport<ToleranceResult>
{
    /// <summary>Columns of tolerance.parquet; the Monte Carlo columns are null where it did not run.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.Double("added_noise"), ColumnSpec.Long("shots"), ColumnSpec.Double("power"),
        ColumnSpec.NullableDouble("power_mc"), ColumnSpec.NullableDouble("power_mc_err"),
    ];

    /// <summary>Writes the three files into <paramref name="directory"/> and returns their paths.</summary>
    public async Task<IReadOnlyList<string>> WriteAsync(ToleranceResult result, string directory, CancellationToken cancel = default)
    {
        var metadata = result.Provenance;
        Directory.CreateDirectory(directory);
        string json = Path.Combine(directory, "tolerance.json"), table = Path.Combine(directory, "tolerance.parquet"), png = Path.Combine(directory, "tolerance.png");
        var p = result.Points;
        var keys = new Dictionary<string, string>(metadata.ToKeyValues())
        {
            ["decohere.tolerance.mode"] = result.Mode,
            ["decohere.tolerance.delay_s"] = result.Settings.DelayS.ToString("R", CultureInfo.InvariantCulture),
            ["decohere.tolerance.confidence"] = result.Settings.Confidence.ToString("R", CultureInfo.InvariantCulture),
        };
        await ParquetTable.WriteAsync(table, Columns,
            [p.Select(x => x.AddedNoise).ToArray(), p.Select(x => x.Shots).ToArray(), p.Select(x => x.Power).ToArray(),
             p.Select(x => x.PowerMc).ToArray(), p.Select(x => x.PowerMcErr).ToArray()], keys, cancel: cancel);
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(Json(result, metadata), json);
        cancel.ThrowIfCancellationRequested();
        var plot = Plot(result);
        AtomicFile.Write(png, tmp => plot.SavePng(tmp, 1200, 800));
        return [json, table, png];
    }

    /// <summary>The content of tolerance.json.</summary>
    public static JsonObject Json(ToleranceResult r, Provenance metadata)
    {
        var s = r.Settings;
        var root = SummaryJson.ProvenanceRoot(metadata);
        root["mode"] = r.Mode;
        root["reference"] = r.Reference;
        root["delay_s"] = s.DelayS;
        root["delay_past_scenario_end"] = r.PastScenarioEnd;
        root["var_min"] = SummaryJson.Number(r.VarMin);
        root["squeezing_db"] = SummaryJson.Number(r.SqueezingDb);
        root["threshold_db"] = s.ThresholdDb;
        root["threshold_var"] = r.ThresholdVariance;
        root["confidence"] = s.Confidence;
        root["target_power"] = s.TargetPower;
        root["calibration_uncertainty"] = s.CalibrationUncertainty is { } c ? c : null;
        root["monte_carlo_draws"] = s.CalibrationUncertainty is null ? null : s.Draws;
        root["power_definition"] = "probability that the one-sided χ² upper confidence bound of (sample variance − added_noise) is below threshold_var";
        root["largest_added_noise"] = new JsonArray(r.LargestAddedNoise.Select(x =>
        {
            var o = new JsonObject { ["shots"] = x.Shots };
            SummaryJson.Set(o, "added_noise", x.AddedNoise, x.AddedNoise is null
                ? "the target power is not reached even without added noise"
                : "unbounded: the target power holds for any added noise up to 1e12 quanta");
            return (JsonNode)o;
        }).ToArray());
        root["fewest_shots"] = new JsonArray(r.FewestShots.Select(x =>
        {
            var o = new JsonObject { ["added_noise"] = x.AddedNoise, ["shots"] = x.Shots };
            if (x.Shots is null)
                o["shots" + SummaryJson.ReasonSuffix] = r.VarMin >= r.ThresholdVariance
                    ? "var_min is not below the threshold: no number of shots resolves it"
                    : "more than 1e9 shots would be needed";
            return (JsonNode)o;
        }).ToArray());
        if (r.ScenarioReadout is { } own)
        {
            var readout = ReadoutSummary.Chain(own.Chain);
            readout["shots"] = own.Shots;
            readout["power"] = SummaryJson.Number(own.Power);
            root["readout"] = readout;
        }
        root["notes"] = new JsonArray(r.Notes.Select(n => (JsonNode)JsonValue.Create(n)).ToArray());
        return root;
    }

    private static Plot Plot(ToleranceResult r)
    {
        var noise = r.Settings.AddedNoise;
        var shots = r.Settings.Shots;
        // Heatmap rows run top to bottom; row 0 holds the largest shot count so that shots grow upwards.
        var order = shots.Select((s, i) => (s, i)).OrderBy(p => p.s).ToArray();
        var z = new double[shots.Length, noise.Length];
        for (int row = 0; row < order.Length; row++)
            for (int col = 0; col < noise.Length; col++)
                z[order.Length - 1 - row, col] = r.Points[col * shots.Length + order[row].i].Power;
        var plot = new Plot();
        var heat = plot.Add.Heatmap(z);
        heat.Colormap = new ScottPlot.Colormaps.Viridis();
        heat.ManualRange = new ScottPlot.Range(0, 1);
        double dx = noise.Length > 1 ? (noise[^1] - noise[0]) / (noise.Length - 1) : 0.5;
        heat.Rectangle = new CoordinateRect(noise[0] - dx / 2, noise[^1] + dx / 2, -0.5, order.Length - 0.5);
        plot.Add.ColorBar(heat).Label = "power";

        // The target-power curve: the largest tolerable added noise at each shot count.
        var xs = new List<double>();
        var ys = new List<double>();
        for (int row = 0; row < order.Length; row++)
            if (r.LargestAddedNoise[order[row].i].AddedNoise is { } n && double.IsFinite(n)) { xs.Add(n); ys.Add(row); }
        if (xs.Count > 0)
        {
            var curve = plot.Add.ScatterLine(xs.ToArray(), ys.ToArray());
            curve.Color = Colors.White;
            curve.LineWidth = 3;
            curve.MarkerSize = 8;
            curve.MarkerShape = MarkerShape.FilledCircle;
            curve.LegendText = $"power = {r.Settings.TargetPower:G3} (largest tolerable added noise)";
            plot.ShowLegend(Alignment.UpperRight);
        }
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        for (int row = 0; row < order.Length; row++) ticks.AddMajor(row, order[row].s.ToString(CultureInfo.InvariantCulture));
        plot.Axes.Left.TickGenerator = ticks;
        plot.Axes.SetLimitsX(noise[0] - dx / 2, noise[^1] + dx / 2);
        plot.Axes.SetLimitsY(-0.5, order.Length - 0.5);
        plot.XLabel("added noise (quanta per quadrature, input-referred)");
        plot.YLabel("shots");
        plot.Title($"{r.Scenario.Name}: power to resolve {r.SqueezingDb:F2} dB of squeezing of {r.Mode} at {r.Settings.DelayS * 1e3:G4} ms " +
                   $"({r.Settings.Confidence:P0} upper bound below {r.Settings.ThresholdDb:G3} dB)");
        return plot;
    }
}

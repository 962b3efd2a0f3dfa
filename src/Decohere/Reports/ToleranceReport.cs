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
        return [json, table, .. SavePlot(result, Path.ChangeExtension(png, null))];
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

    /// <summary>
    /// tolerance.png/.svg: power over added noise × shots (log shots axis when they span decades) with the target-power
    /// contour; with a calibration uncertainty a second panel shows the Monte Carlo power, where the lab subtracts an
    /// added noise that is off by that uncertainty.
    /// </summary>
    private static string[] SavePlot(ToleranceResult r, string stem)
    {
        var panels = new List<Plot> { Panel(r, p => p.Power, "", bar: r.Settings.CalibrationUncertainty is null) };
        if (r.Settings.CalibrationUncertainty is { } sigma)
            panels.Add(Panel(r, p => p.PowerMc ?? double.NaN,
                $"Monte Carlo power, calibration error σ = {Plotting.Ticks.Label(sigma)} quanta ({r.Settings.Draws} draws)", bar: true));
        var unit = Plotting.DisplayUnits.For(Dimension.Time, [r.Settings.DelayS]);
        panels[0].Title($"{r.Scenario.Name}: {(panels.Count > 1 ? "closed-form " : "")}power to resolve {r.SqueezingDb:F2} dB of squeezing of {r.Mode}\n" +
                        $"{unit.Format(r.Settings.DelayS)} after the {r.Reference}; {r.Settings.Confidence * 100:G3}% upper bound below {r.Settings.ThresholdDb:G3} dB");
        var multiplot = new Multiplot();
        multiplot.Reset(panels[0]);
        foreach (var p in panels.Skip(1)) multiplot.AddPlot(p);
        multiplot.Layout = new ScottPlot.MultiplotLayouts.Grid(1, panels.Count);
        return Plotting.Figure.Save(multiplot, stem, panels.Count == 1 ? 1200 : 2000, 760);
    }

    private static Plot Panel(ToleranceResult r, Func<TolerancePoint, double> power, string name, bool bar)
    {
        var noise = r.Settings.AddedNoise.ToArray();
        var shots = r.Settings.Shots.Select((s, i) => (s, i)).OrderBy(p => p.s).ToArray();
        bool log = Plotting.Ticks.SpansDecades(shots.Select(p => (double)p.s));
        double[] y = [.. shots.Select(p => log ? Math.Log10(p.s) : p.s)];
        var z = new double[noise.Length, shots.Length];
        for (int i = 0; i < noise.Length; i++)
            for (int j = 0; j < shots.Length; j++)
                z[i, j] = power(r.Points[i * r.Settings.Shots.Length + shots[j].i]);
        var plot = Plotting.Figure.New();
        Plotting.HeatMap.Add(plot, noise, y, z, "power (probability the squeezing is resolved)", new ScottPlot.Range(0, 1), bar);
        Plotting.HeatMap.Contour(plot, noise, y, z, r.Settings.TargetPower, $"power = {r.Settings.TargetPower:G3} (target)");
        if (r.ScenarioReadout is { } own)
        {
            var mark = plot.Add.ScatterPoints(new[] { own.Chain.AddedNoise }, new[] { log ? Math.Log10(own.Shots) : own.Shots });
            mark.Color = Plotting.Figure.Colour(1);
            mark.MarkerSize = 14;
            mark.MarkerShape = MarkerShape.FilledDiamond;
            mark.LegendText = $"scenario's readout ({own.Shots} shots)";
        }
        if (log) Plotting.Ticks.Log(plot.Axes.Left, y[0] - 0.5 * (y.Length > 1 ? y[1] - y[0] : 1), y[^1] + 0.5 * (y.Length > 1 ? y[^1] - y[^2] : 1));
        else Plotting.Ticks.Linear(plot.Axes.Left);
        Plotting.Ticks.Linear(plot.Axes.Bottom);
        plot.XLabel("added noise n_add (quanta, input-referred)");
        plot.YLabel("shots per delay");
        plot.Title(name);
        Plotting.Legends.BelowIfAny(plot);
        return plot;
    }
}

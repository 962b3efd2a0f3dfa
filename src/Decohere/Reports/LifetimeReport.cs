using ScottPlot;
using System.Text.Json.Nodes;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>Writes lifetime.json, lifetime.parquet (delay_s, var_min, squeezing_db, power) and lifetime.png, each atomically.</summary>
public sealed class LifetimeReport : IReport<LifetimeResult>
{
    /// <summary>Columns of lifetime.parquet; power is null when the scenario has no readout.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
        [ColumnSpec.Double("delay_s"), ColumnSpec.Double("var_min"), ColumnSpec.Double("squeezing_db"), ColumnSpec.NullableDouble("power")];

    /// <summary>Writes the three files into <paramref name="directory"/> and returns their paths.</summary>
    public async Task<IReadOnlyList<string>> WriteAsync(LifetimeResult report, string directory, CancellationToken cancel = default)
    {
        var metadata = report.Provenance;
        Directory.CreateDirectory(directory);
        string json = Path.Combine(directory, "lifetime.json"), table = Path.Combine(directory, "lifetime.parquet"), png = Path.Combine(directory, "lifetime.png");
        double[] delays = [.. report.DelaysS], varMin = [.. report.VarMin];
        double[] db = varMin.Select(Physics.SqueezingDb).ToArray();
        double?[] power = [.. report.Power];
        var keys = new Dictionary<string, string>(metadata.ToKeyValues())
        {
            ["decohere.lifetime.mode"] = report.Core.Mode,
            ["decohere.lifetime.reference"] = report.Core.Reference,
            ["decohere.lifetime.threshold_db"] = report.Core.ThresholdDb.ToString("R", System.Globalization.CultureInfo.InvariantCulture),
        };
        await ParquetTable.WriteAsync(table, Columns, [delays, varMin, db, power], keys, cancel: cancel);
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(Json(report, metadata), json);
        cancel.ThrowIfCancellationRequested();
        var plot = Plot(report, delays, db, power);
        AtomicFile.Write(png, tmp => plot.SavePng(tmp, 1200, 700));
        return [json, table, png];
    }

    /// <summary>The content of lifetime.json.</summary>
    public static JsonObject Json(LifetimeResult report, Provenance metadata)
    {
        var c = report.Core;
        var root = SummaryJson.ProvenanceRoot(metadata);
        root["mode"] = c.Mode;
        root["reference"] = c.Reference;
        root["reference_time_s"] = c.OriginS;
        root["scenario_end_delay_s"] = c.ScenarioEndDelayS;
        root["threshold_db"] = c.ThresholdDb;
        root["threshold_var"] = c.ThresholdVariance;
        root["var_min_at_reference"] = SummaryJson.Number(c.InitialVarMin);
        root["squeezing_db_at_reference"] = SummaryJson.Number(c.InitialSqueezingDb);
        string physical = Status(c.PhysicalStatus), observable = Status(c.ObservableStatus);
        SummaryJson.Set(root, "physical_lifetime_s", c.PhysicalLifetimeS, physical);
        root["physical_status"] = physical;
        root["physical_past_scenario_end"] = c.PhysicalPastScenarioEnd;
        SummaryJson.Set(root, "approximate_lifetime_s", c.ApproximateLifetimeS,
            $"n_th + ½ = {c.BathOccupancy + 0.5:G4} is not above threshold_var: the single-mode law never reaches the threshold");
        root["approximation"] = "single-mode law t* = (1/γ)·ln[(n_th + ½ − var_min(0)) / (n_th + ½ − threshold_var)]";
        root["decay_rate_per_s"] = c.DecayRate;
        root["bath_occupancy"] = c.BathOccupancy;
        root["thermal_decoherence_rate_per_s"] = Physics.ThermalDecoherenceRate(c.DecayRate, c.BathOccupancy);
        SummaryJson.Set(root, "ratio", c.Ratio, "the physical or the approximate lifetime is not a positive number");
        SummaryJson.Set(root, "observable_lifetime_s", c.ObservableLifetimeS, observable);
        root["observable_status"] = observable;
        root["observable_criterion"] = "first delay at which the power (probability that the one-sided χ² upper confidence bound of var − added_noise is below threshold_var) falls to 0.5, the median-measurement criterion";
        SummaryJson.Set(root, "power_at_reference", c.PowerAtStart, "no_readout");
        root["readout"] = c.Readout is { } r
            ? new JsonObject { ["method"] = r.Method, ["added_noise"] = r.AddedNoise, ["shots"] = r.Shots, ["confidence"] = r.Confidence }
            : null;
        root["sensitivities"] = new JsonArray(report.Sensitivities.Select(s =>
        {
            var o = new JsonObject { ["parameter"] = s.Parameter, ["change"] = s.Change, ["from"] = s.From, ["to"] = s.To };
            SummaryJson.Set(o, "physical_lifetime_s", s.PhysicalLifetimeS, "the changed scenario's squeezing does not cross the threshold within the horizon");
            SummaryJson.Set(o, "observable_lifetime_s", s.ObservableLifetimeS, "the changed scenario has no observable lifetime (no readout, or never resolved)");
            SummaryJson.Set(o, "physical_change_s", s.PhysicalChangeS, "one of the two physical lifetimes does not exist");
            SummaryJson.Set(o, "observable_change_s", s.ObservableChangeS, "one of the two observable lifetimes does not exist");
            return (JsonNode)o;
        }).ToArray());
        root["notes"] = new JsonArray(c.Notes.Select(n => (JsonNode)JsonValue.Create(n)).ToArray());
        return root;
    }

    /// <summary>Status as written in files: crossed, not_squeezed_at_start, beyond_horizon, never_resolved, no_readout.</summary>
    public static string Status(LifetimeStatus s) => s switch
    {
        LifetimeStatus.Crossed => "crossed",
        LifetimeStatus.NotSqueezedAtStart => "not_squeezed_at_start",
        LifetimeStatus.BeyondHorizon => "beyond_horizon",
        LifetimeStatus.NeverResolved => "never_resolved",
        _ => "no_readout",
    };

    private static Plot Plot(LifetimeResult report, double[] delays, double[] db, double?[] power)
    {
        var c = report.Core;
        var plot = new Plot();
        double[] ms = delays.Select(d => d * 1e3).ToArray();
        var line = plot.Add.ScatterLine(ms, db);
        line.LineWidth = 2;
        line.Color = Colors.SteelBlue;
        line.LegendText = $"{c.Mode} squeezing (dB)";
        var threshold = plot.Add.HorizontalLine(c.ThresholdDb);
        threshold.Color = Colors.Black;
        threshold.LinePattern = LinePattern.Dotted;
        threshold.LegendText = $"threshold {c.ThresholdDb:G3} dB";
        Marker(plot, c.PhysicalLifetimeS, Colors.FireBrick, dashed: false, "physical lifetime");
        Marker(plot, c.ApproximateLifetimeS, Colors.FireBrick, dashed: true, "single-mode t*");
        Marker(plot, c.ObservableLifetimeS, Colors.DarkGreen, dashed: false, "observable lifetime");
        if (c.Readout is { } r)
        {
            var p = plot.Add.ScatterLine(ms, power.Select(x => x ?? double.NaN).ToArray());
            p.Axes.YAxis = plot.Axes.Right;
            p.Color = Colors.DarkGreen.WithAlpha(0.6);
            p.LinePattern = LinePattern.Dashed;
            p.LegendText = $"power (n_add {r.AddedNoise:G3}, {r.Shots} shots, {r.Confidence:P0})";
            plot.Axes.Right.Label.Text = "power (probability squeezing is resolved)";
            plot.Axes.SetLimitsY(0, 1.05, plot.Axes.Right);
        }
        double lo = db.Where(double.IsFinite).DefaultIfEmpty(0).Min(), hi = db.Where(double.IsFinite).DefaultIfEmpty(0).Max();
        lo = Math.Min(lo, c.ThresholdDb);
        hi = Math.Max(hi, c.ThresholdDb);
        double pad = 0.08 * Math.Max(hi - lo, 1);
        plot.Axes.SetLimitsY(lo - pad, hi + pad, plot.Axes.Left);
        plot.Axes.SetLimitsX(0, ms[^1]);
        plot.XLabel($"delay after the {c.Reference} (ms)");
        plot.YLabel("squeezing (dB below zero-point)");
        plot.Title($"{report.Scenario.Name}: squeezing lifetime of {c.Mode}");
        plot.ShowLegend(Alignment.UpperRight);
        return plot;
    }

    // A vertical line at a lifetime (s, drawn in ms), when it exists and is positive; dashed for the approximation.
    private static void Marker(Plot plot, double? lifetimeS, Color color, bool dashed, string label)
    {
        if (lifetimeS is not (> 0 and var t)) return;
        var line = plot.Add.VerticalLine(t * 1e3);
        line.Color = color;
        if (dashed) line.LinePattern = LinePattern.Dashed;
        else line.LineWidth = 2;
        line.LegendText = $"{label} {t * 1e3:G4} ms";
    }
}

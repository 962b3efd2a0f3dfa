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
        return [json, table, .. Plotting.Figure.Save(Plot(report, delays, db, power), Path.ChangeExtension(png, null))];
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
        // Values measured elsewhere (SI units) that the scenario was given, and the lifetimes' spread from their errors.
        root["measured_values"] = new JsonArray([.. report.Settings.Measured.Values.Select(v =>
        {
            var o = new JsonObject { ["path"] = v.Path, ["value"] = v.Value, ["source"] = v.Source };
            SummaryJson.Set(o, "sd", v.Sd, "the source gives no standard error");
            return (JsonNode)o;
        })]);
        if (!report.Settings.Measured.Values.IsEmpty)
        {
            SummaryJson.Set(root, "physical_lifetime_sd_s", report.PhysicalLifetimeSd, "a +1σ change of a measured value leaves no physical lifetime");
            SummaryJson.Set(root, "observable_lifetime_sd_s", report.ObservableLifetimeSd, "no readout, or a +1σ change leaves no observable lifetime");
        }
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
        var plot = Plotting.Figure.New();
        var unit = Plotting.DisplayUnits.For(Dimension.Time, delays);
        double[] t = [.. delays.Select(unit.From)];
        var line = plot.Add.ScatterLine(t, db);
        line.LineWidth = Plotting.Figure.LineWidth;
        line.Color = Plotting.Figure.Colour(0);
        line.LegendText = $"squeezing of {c.Mode}";
        var threshold = plot.Add.HorizontalLine(c.ThresholdDb);
        threshold.Color = Plotting.Figure.Ink;
        threshold.LineWidth = 1;
        threshold.LinePattern = LinePattern.Dotted;
        threshold.LegendText = $"threshold {c.ThresholdDb:G3} dB";
        double lo = db.Where(double.IsFinite).DefaultIfEmpty(0).Min(), hi = db.Where(double.IsFinite).DefaultIfEmpty(0).Max();
        lo = Math.Min(lo, c.ThresholdDb);
        hi = Math.Max(hi, c.ThresholdDb);
        double pad = 0.08 * Math.Max(hi - lo, 1);
        // The physical lifetime and the single-mode t* often nearly coincide: distinct colours and patterns, and each
        // marker labelled at its own height, so neither hides the other.
        Marker(plot, unit, c.PhysicalLifetimeS, Plotting.Figure.Colour(1), LinePattern.Solid, "physical lifetime", hi + pad * 0.2);
        Marker(plot, unit, c.ApproximateLifetimeS, Plotting.Figure.Colour(5), LinePattern.Dashed, "single-mode t*", hi - pad * 0.9);
        Marker(plot, unit, c.ObservableLifetimeS, Plotting.Figure.Colour(2), LinePattern.Solid, "observable lifetime", hi - pad * 2);
        if (c.Readout is { } r)
        {
            var p = plot.Add.ScatterLine(t, power.Select(x => x ?? double.NaN).ToArray());
            p.Axes.YAxis = plot.Axes.Right;
            p.Color = Plotting.Figure.Colour(2);
            p.LineWidth = Plotting.Figure.LineWidth;
            p.LinePattern = LinePattern.DenselyDashed;
            p.LegendText = $"power (n_add {r.AddedNoise:G3}, {r.Shots} shots, {r.Confidence * 100:G3}%), right axis";
            plot.Axes.Right.Label.Text = "power (probability the squeezing is resolved)";
            plot.Axes.SetLimitsY(0, 1.05, plot.Axes.Right);
            Plotting.Ticks.Linear(plot.Axes.Right);
        }
        plot.Axes.SetLimitsY(lo - pad, hi + 2 * pad, plot.Axes.Left);
        plot.Axes.SetLimitsX(0, t[^1]);
        Plotting.Ticks.Linear(plot.Axes.Bottom);
        Plotting.Ticks.Linear(plot.Axes.Left);
        plot.XLabel($"delay after the {c.Reference} ({unit.Symbol})");
        plot.YLabel("squeezing (dB below zero-point)");
        plot.Title($"{report.Scenario.Name}: squeezing lifetime of {c.Mode}");
        Plotting.Figure.LegendOutside(plot);
        return plot;
    }

    // A vertical line at a lifetime when it exists and is positive, with its value written beside it at height y.
    private static void Marker(Plot plot, Plotting.DisplayUnit unit, double? lifetimeS, Color color, LinePattern pattern, string label, double y)
    {
        if (lifetimeS is not (> 0 and var t)) return;
        var line = plot.Add.VerticalLine(unit.From(t));
        line.Color = color;
        line.LineWidth = Plotting.Figure.LineWidth;
        line.LinePattern = pattern;
        line.LegendText = $"{label} {unit.Format(t)}";
        var text = plot.Add.Text($"{label} {unit.Format(t)}", unit.From(t), y);
        text.LabelFontColor = color;
        text.LabelFontSize = Plotting.Figure.FontSize - 1;
        text.LabelAlignment = Alignment.MiddleLeft;
        text.OffsetX = 6;
        text.LabelBackgroundColor = Colors.White.WithAlpha(0.85);
    }
}

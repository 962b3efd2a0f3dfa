using ScottPlot;
using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Ringdown;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>Writes ringdown.parquet, ringdown.json and ringdown.png/.svg, each atomically.</summary>
public sealed class RingdownReport : IReport<RingdownResult>
{
    /// <summary>Columns of ringdown.parquet: the data, the fitted mean and the standardised residual per point.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
        [ColumnSpec.Double("time_s"), ColumnSpec.Double("observed"), ColumnSpec.Double("model"), ColumnSpec.Double("residual")];

    /// <inheritdoc/>
    public Task<IReadOnlyList<string>> WriteAsync(RingdownResult result, string directory, CancellationToken cancel = default) =>
        LabReportFiles.Write(directory, "ringdown", path =>
        {
            var keys = new Dictionary<string, string>(result.Provenance.ToKeyValues())
            {
                ["decohere.ringdown.kind"] = Kind(result.Data.Kind),
                ["decohere.ringdown.residual"] = result.Data.Kind == RingdownKind.Energy ? "(observed − model)/model (unit variance for an exponential)" : "(observed − model)/σ",
            };
            return ParquetTable.WriteAsync(path, Columns,
                [result.Data.TimesS.ToArray(), result.Data.Values.ToArray(), result.Model.ToArray(), result.Residuals.ToArray()], keys, cancel: cancel);
        }, () => Json(result), () => Plot(result), cancel);

    private static string Kind(RingdownKind kind) => kind == RingdownKind.Energy ? "energy" : "amplitude";

    private static JsonObject Estimate(RingdownEstimate e, string unit) => new()
    {
        ["value"] = SummaryJson.Number(e.Value),
        ["stderr"] = SummaryJson.Number(e.StandardError),
        ["ci_low"] = e.Low is { } lo ? SummaryJson.Number(lo) : null,
        ["ci_high"] = e.High is { } hi ? SummaryJson.Number(hi) : null,
        ["unit"] = unit,
    };

    /// <summary>The content of ringdown.json.</summary>
    public static JsonObject Json(RingdownResult r)
    {
        var root = SummaryJson.ProvenanceRoot(r.Provenance);
        root["data"] = new JsonObject { ["file"] = r.Data.Source, ["kind"] = Kind(r.Data.Kind), ["points"] = r.Data.TimesS.Length };
        root["model"] = r.Data.Kind == RingdownKind.Energy
            ? "E(t) = E0·exp(−γ(t − t0)) + E_th; each point exponential (thermal) about E(t)"
            : r.Data.Sigmas is null ? "A(t)² = A0²·exp(−γ(t − t0)) + A_th²; Gaussian noise of unknown common σ (profiled)"
            : "A(t)² = A0²·exp(−γ(t − t0)) + A_th²; Gaussian noise with the stated σ per point";
        root["confidence"] = r.Settings.Confidence;
        root["ci_method"] = "profile likelihood";
        root["decay_rate_per_s"] = Estimate(r.DecayRate, "s⁻¹ (energy)");
        root["linewidth_hz"] = Estimate(r.LinewidthHz, "Hz");
        root["energy_decay_time_s"] = SummaryJson.Number(1 / r.DecayRate.Value);
        root["frequency_hz"] = r.Settings.FrequencyHz is { } f ? SummaryJson.Number(f) : null;
        root["quality_factor"] = r.QualityFactor is { } q ? Estimate(q, "") : null;
        root["initial"] = Estimate(r.Initial, "data units");
        root["thermal_floor"] = Estimate(r.Floor, "data units");
        root["noise_sigma"] = r.NoiseSigma is { } s ? SummaryJson.Number(s) : null;
        root["goodness_of_fit"] = new JsonObject
        {
            ["deviance"] = SummaryJson.Number(r.Deviance),
            ["degrees_of_freedom"] = r.DegreesOfFreedom,
            ["p_value"] = r.PValue is { } p ? SummaryJson.Number(p) : null,
        };
        root["warnings"] = SummaryJson.Strings(r.Warnings);
        return root;
    }

    private static Plot Plot(RingdownResult r)
    {
        var plot = new Plot();
        double span = r.Data.TimesS[^1] - r.Data.TimesS[0];
        var (scale, unit) = span >= 1 ? (1.0, "s") : span >= 1e-3 ? (1e3, "ms") : (1e6, "µs");
        double[] t = [.. r.Data.TimesS.Select(x => x * scale)];
        double Log(double v) => Math.Log10(Math.Max(v, 1e-300));
        double positive = r.Data.Values.Where(v => v > 0).DefaultIfEmpty(1).Min();
        var data = plot.Add.ScatterPoints(t, r.Data.Values.Select(v => Log(Math.Max(v, positive))).ToArray());
        data.Color = Colors.SteelBlue.WithAlpha(0.6);
        data.MarkerSize = 5;
        data.LegendText = $"measured {Kind(r.Data.Kind)}";
        var model = plot.Add.ScatterLine(t, r.Model.Select(Log).ToArray());
        model.Color = Colors.FireBrick;
        model.LineWidth = 3;
        string q = r.QualityFactor is { } qf ? $", Q = {qf.Value:G4}" : "";
        model.LegendText = $"fit: γ = {r.DecayRate.Value:G4} s⁻¹ (linewidth {r.LinewidthHz.Value:G4} Hz){q}";
        var floor = plot.Add.HorizontalLine(Log(r.Floor.Value));
        floor.Color = Colors.Black;
        floor.LinePattern = LinePattern.Dotted;
        floor.LegendText = $"thermal floor {r.Floor.Value:G3}";
        double decades = Log(r.Data.Values.Max()) - Log(positive);
        plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
        {
            MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
            // Under two decades, decade ticks alone would leave one label.
            IntegerTicksOnly = decades > 2,
            LabelFormatter = y => Math.Pow(10, y).ToString("G3", CultureInfo.InvariantCulture),
        };
        plot.XLabel($"time ({unit})");
        plot.YLabel($"{Kind(r.Data.Kind)} (data units, log scale)");
        plot.Title($"{r.Data.Source}: ring-down");
        plot.ShowLegend(Alignment.UpperRight);
        return plot;
    }
}

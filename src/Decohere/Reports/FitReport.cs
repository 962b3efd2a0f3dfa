using ScottPlot;
using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>Writes a fit's fit.json, fit.parquet (per delay: data, model, residuals, intervals) and fit.png.</summary>
public sealed class FitReport : IReport<FitResult>
{
    /// <summary>The columns of fit.parquet, in file order. Data columns are null where the data shape has no such value.</summary>
    public static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Double("delay_s"), ColumnSpec.Long("shots"),
        ColumnSpec.NullableDouble("var_i"), ColumnSpec.NullableDouble("var_q"), ColumnSpec.NullableDouble("cov_iq"),
        ColumnSpec.NullableDouble("var_i_low"), ColumnSpec.NullableDouble("var_i_high"),
        ColumnSpec.NullableDouble("var_q_low"), ColumnSpec.NullableDouble("var_q_high"),
        ColumnSpec.NullableDouble("occupancy"), ColumnSpec.NullableDouble("occupancy_err"),
        ColumnSpec.Double("var_i_model"), ColumnSpec.Double("var_q_model"), ColumnSpec.Double("cov_iq_model"),
        ColumnSpec.NullableDouble("var_i_model_low"), ColumnSpec.NullableDouble("var_i_model_high"),
        ColumnSpec.NullableDouble("var_q_model_low"), ColumnSpec.NullableDouble("var_q_model_high"),
        ColumnSpec.Double("occupancy_model"), ColumnSpec.NullableDouble("occupancy_model_low"), ColumnSpec.NullableDouble("occupancy_model_high"),
        ColumnSpec.NullableDouble("residual_i"), ColumnSpec.NullableDouble("residual_q"), ColumnSpec.NullableDouble("residual_occupancy"),
    ];

    /// <summary>Writes fit.json, fit.parquet and fit.png into <paramref name="directory"/>; returns the paths.</summary>
    public async Task<IReadOnlyList<string>> WriteAsync(FitResult fit, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        var metadata = fit.Provenance;
        string json = Path.Combine(directory, "fit.json"), table = Path.Combine(directory, "fit.parquet"), png = Path.Combine(directory, "fit.png");
        await WriteTableAsync(fit, table, metadata, cancel);
        SummaryJson.Write(Json(fit, metadata), json);
        cancel.ThrowIfCancellationRequested();
        return [json, table, .. SavePlot(fit, Path.ChangeExtension(png, null)), .. FitTables.Write(fit, directory)];
    }

    internal static JsonObject EstimateJson(FittedQuantity e, string? unit = null)
    {
        var o = new JsonObject();
        SummaryJson.Set(o, "value", e.Value, "not a finite number at the optimum");
        SummaryJson.Set(o, "stderr", e.StandardError, "the observed information is singular (the data do not fix this parameter alone)");
        SummaryJson.Set(o, "ci_low", e.Low, "the profile did not reach the confidence level below the estimate");
        SummaryJson.Set(o, "ci_high", e.High, "the profile did not reach the confidence level above the estimate: unbounded");
        o["ci_method"] = e.Method;
        if (unit is not null) o["unit"] = unit;
        // An end the profile never reached is the domain's bound (0) or unbounded (null); say which.
        if (!e.LowReached) o["ci_low_is_bound"] = true;
        if (!e.HighReached) o["ci_high_unbounded"] = true;
        return o;
    }

    internal static JsonObject GoodnessJson(GoodnessOfFit g)
    {
        var o = new JsonObject { ["deviance"] = SummaryJson.Number(g.Deviance), ["degrees_of_freedom"] = g.DegreesOfFreedom };
        SummaryJson.Set(o, "reduced_chi_square", g.ReducedChiSquare, "no degrees of freedom left to test the fit");
        SummaryJson.Set(o, "p_value", g.PValue, "no degrees of freedom left to test the fit");
        return o;
    }

    private static readonly Dictionary<string, string> DerivedUnits = new()
    {
        ["bath_occupancy"] = "quanta", ["bath_temperature_k"] = "K", ["thermal_decoherence_rate_per_s"] = "s^-1",
        ["quality_factor"] = "", ["linewidth_hz"] = "Hz", ["energy_decay_time_s"] = "s",
    };

    /// <summary>The fit.json document.</summary>
    public static JsonObject Json(FitResult fit, Provenance metadata)
    {
        var root = SummaryJson.ProvenanceRoot(metadata);
        root["data"] = new JsonObject
        {
            ["file"] = fit.Data.Source,
            ["shape"] = fit.Data.Shape.ToString().ToLowerInvariant(),
            ["delays"] = fit.Data.Delays.Length,
            ["shots"] = fit.Data.TotalShots,
        };
        root["likelihood"] = fit.Likelihood;
        root["confidence"] = fit.Confidence;
        // SI units, as the parameters: a Gaussian prior by mean and sd, a bounded one by low and high.
        root["priors"] = new JsonArray([.. fit.Priors.Select(q => (JsonNode)(q.IsGaussian
            ? new JsonObject { ["path"] = q.Path, ["kind"] = "gaussian", ["mean"] = SummaryJson.Number(q.Mean!.Value), ["sd"] = SummaryJson.Number(q.Sd!.Value) }
            : new JsonObject { ["path"] = q.Path, ["kind"] = "bounded", ["low"] = SummaryJson.Number(q.Low!.Value), ["high"] = SummaryJson.Number(q.High!.Value) }))]);
        root["calibration"] = fit.Calibration is { } c
            ? new JsonObject
            {
                ["file"] = c.Source, ["gain"] = SummaryJson.Number(c.Gain), ["gain_sd"] = SummaryJson.Number(c.GainSd),
                ["added_noise"] = SummaryJson.Number(c.AddedNoise), ["added_noise_sd"] = SummaryJson.Number(c.AddedNoiseSd),
            }
            : null;
        // SI units: each fixed parameter's value ± sd, and the shift of every fitted parameter per +1σ of it.
        root["fixed"] = new JsonArray([.. fit.FixedBiases.Select(b => (JsonNode)new JsonObject
        {
            ["path"] = b.Path, ["value"] = SummaryJson.Number(b.Value), ["sd"] = SummaryJson.Number(b.Sd),
            ["shift_per_sd"] = new JsonObject(fit.Parameters.Select((e, k) => KeyValuePair.Create<string, JsonNode?>(e.Name, SummaryJson.Number(b.ShiftPerSd[k])))),
        })]);
        root["parameters"] = new JsonObject(fit.Parameters.Select((e, k) =>
            KeyValuePair.Create<string, JsonNode?>(e.Name, EstimateJson(e, Quantity.SiUnit(fit.Paths[k].Dimension) is { Length: > 0 } u ? u : "quanta"))));
        root["derived"] = new JsonObject(fit.Derived.Select(e =>
            KeyValuePair.Create<string, JsonNode?>(e.Name, EstimateJson(e, DerivedUnits.GetValueOrDefault(e.Name)))));
        root["identified_combinations"] = new JsonArray(fit.Combinations.Select(c =>
        {
            var o = EstimateJson(c.FittedQuantity);
            o["name"] = c.Name;
            o["expression"] = c.Expression;
            o["parameters"] = new JsonArray(c.First, c.Second);
            o["correlation"] = SummaryJson.Number(c.Correlation);
            return (JsonNode)o;
        }).ToArray());
        int p = fit.Parameters.Length;
        root["correlation"] = new JsonObject
        {
            ["parameters"] = new JsonArray([.. fit.Parameters.Select(e => (JsonNode)JsonValue.Create(e.Name))]),
            ["matrix"] = new JsonArray([.. Enumerable.Range(0, p).Select(i => (JsonNode)new JsonArray([.. Enumerable.Range(0, p).Select(j => SummaryJson.Number(fit.Correlation[i, j]))]))]),
        };
        root["goodness_of_fit"] = GoodnessJson(fit.Goodness);
        root["evaluations"] = fit.Evaluations;
        root["elapsed_s"] = Math.Round(fit.ElapsedSeconds, 3);
        root["warnings"] = SummaryJson.Strings(fit.Warnings);
        return root;
    }

    private static async Task WriteTableAsync(FitResult fit, string path, Provenance metadata, CancellationToken cancel)
    {
        int n = fit.Delays.Length;
        double z = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.5 + fit.Confidence / 2);
        var cols = Columns.Select(c => c.Type == typeof(double?) ? (Array)new double?[n] : c.Type == typeof(long) ? new long[n] : new double[n]).ToArray();
        bool variances = fit.Data.Shape != DataShape.Occupancies;
        for (int k = 0; k < n; k++)
        {
            var d = fit.Delays[k];
            var o = d.Data;
            int c = 0;
            ((double[])cols[c++])[k] = o.DelayS;
            ((long[])cols[c++])[k] = o.Shots;
            void Opt(double? v) => ((double?[])cols[c++])[k] = v is { } x && double.IsFinite(x) ? x : null;
            void Val(double v) => ((double[])cols[c++])[k] = v;
            if (variances)
            {
                var (il, ih) = VarianceStatistics.Interval(o.VarI, o.Shots, fit.Confidence);
                var (ql, qh) = VarianceStatistics.Interval(o.VarQ, o.Shots, fit.Confidence);
                Opt(o.VarI); Opt(o.VarQ); Opt(o.CovIQ); Opt(il); Opt(ih); Opt(ql); Opt(qh);
                double addedNoise = fit.Readout.AddedNoise;
                double cov = o.CovIQ ?? 0;
                // Occupancy implied by the data: mean quadrature variance minus the fitted added noise and zero-point ½ (plus the mean's energy);
                // its error from the χ² variances of s² (2σ⁴/ν) and their covariance (2c²/ν).
                Opt(Physics.ModeOccupancy(o.VarI - addedNoise, o.VarQ - addedNoise, o.MeanI, o.MeanQ));
                Opt(Math.Sqrt((o.VarI * o.VarI + o.VarQ * o.VarQ + 2 * cov * cov) / (2.0 * (o.Shots - 1))));
            }
            else
            {
                for (int i = 0; i < 7; i++) Opt(null);
                Opt(o.Occupancy); Opt(o.OccupancyError);
            }
            var m = d.Model;
            var s = d.ModelSd;
            Val(m.VarI); Val(m.VarQ); Val(m.CovIQ);
            // The band is null where the observed information is singular (no standard deviation of the model).
            Opt(m.VarI - z * s.VarI); Opt(m.VarI + z * s.VarI);
            Opt(m.VarQ - z * s.VarQ); Opt(m.VarQ + z * s.VarQ);
            Val(m.Occupancy); Opt(m.Occupancy - z * s.Occupancy); Opt(m.Occupancy + z * s.Occupancy);
            if (variances)
            {
                // Standardised residual of a sample variance: (s² − σ²)/(σ²·√(2/ν)).
                Opt((o.VarI - m.VarI) / (m.VarI * Math.Sqrt(2.0 / (o.Shots - 1))));
                Opt((o.VarQ - m.VarQ) / (m.VarQ * Math.Sqrt(2.0 / (o.Shots - 1))));
                Opt(null);
            }
            else
            {
                Opt(null); Opt(null);
                Opt((o.Occupancy - m.Occupancy) / o.OccupancyError);
            }
        }
        var meta = metadata.ToKeyValues().ToDictionary();
        meta["decohere.fit.likelihood"] = fit.Likelihood;
        meta["decohere.fit.free"] = string.Join(",", fit.Paths.Select(x => x.Text));
        await ParquetTable.WriteAsync(path, Columns, cols, meta, cancel: cancel);
    }

    /// <summary>
    /// Renders fit.png/.svg: data with their 95% error bars, the fitted curve with its band, and a residual panel below;
    /// a log delay axis when the delays span decades, legends beside the data. Returns the paths.
    /// </summary>
    public static string[] SavePlot(FitResult fit, string stem)
    {
        double z = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.5 + fit.Confidence / 2);
        var axis = new Plotting.TimeAxis(fit.Delays.Select(d => d.Data.DelayS));
        var top = Plotting.Figure.New();
        var bottom = Plotting.Figure.New();
        // On a log axis the curve starts at the first positive delay (a zero delay is a marker left of the break).
        int[] shown = [.. Enumerable.Range(0, fit.Curve.DelaysS.Length).Where(k => !axis.Log || fit.Curve.DelaysS[k] > 0)];
        double[] cx = [.. shown.Select(k => axis.At(fit.Curve.DelaysS[k]))];
        double[] dx = [.. fit.Delays.Select(d => axis.At(d.Data.DelayS))];
        bool variances = fit.Data.Shape != DataShape.Occupancies;
        var series = variances
            ? new (string Label, Func<ReadoutPrediction, double> Get, Func<DelayObservation, double> Data)[]
                { ("var_i", r => r.VarI, o => o.VarI), ("var_q", r => r.VarQ, o => o.VarQ) }
            : [("occupancy", r => r.Occupancy, o => o.Occupancy)];
        for (int s = 0; s < series.Length; s++)
        {
            var (label, get, data) = series[s];
            var color = Plotting.Figure.Colour(s);
            double[] model = [.. shown.Select(k => get(fit.Curve.Model[k]))];
            double[] sd = [.. shown.Select(k => get(fit.Curve.ModelSd[k]))];
            if (sd.All(double.IsFinite))
            {
                var band = top.Add.FillY(cx, [.. model.Select((m, k) => m + z * sd[k])], [.. model.Select((m, k) => m - z * sd[k])]);
                band.FillColor = color.WithAlpha(0.2);
                band.LineWidth = 0;
                band.LegendText = $"{label} model {fit.Confidence * 100:G3}% band";
            }
            var line = top.Add.ScatterLine(cx, model);
            line.Color = color;
            line.LineWidth = Plotting.Figure.LineWidth;
            line.LegendText = $"{label} fit";

            double[] y = [.. fit.Delays.Select(d => data(d.Data))];
            double[] up, down;
            if (variances)
            {
                var iv = fit.Delays.Select(d => VarianceStatistics.Interval(data(d.Data), d.Data.Shots, fit.Confidence)).ToArray();
                up = [.. iv.Select((v, k) => v.High - y[k])];
                down = [.. iv.Select((v, k) => y[k] - v.Low)];
            }
            else
            {
                up = down = [.. fit.Delays.Select(d => z * d.Data.OccupancyError)];
            }
            var bars = top.Add.ErrorBar(dx, y, up);
            bars.YErrorPositive = up;
            bars.YErrorNegative = down;
            bars.Color = color;
            var marks = top.Add.ScatterPoints(dx, y);
            marks.Color = color;
            marks.MarkerSize = 7;
            marks.LegendText = $"{label} data ({fit.Confidence * 100:G3}% interval)";

            double[] residual = [.. fit.Delays.Select(d =>
            {
                double m = get(d.Model);
                return variances ? (data(d.Data) - m) / (m * Math.Sqrt(2.0 / (d.Data.Shots - 1))) : (d.Data.Occupancy - m) / d.Data.OccupancyError;
            })];
            var r = bottom.Add.ScatterPoints(dx, residual);
            r.Color = color;
            r.MarkerSize = 7;
        }
        var zero = bottom.Add.HorizontalLine(0);
        zero.Color = Colors.Black;
        foreach (double level in new[] { -2.0, 2.0 })
        {
            var guide = bottom.Add.HorizontalLine(level);
            guide.Color = Colors.Gray;
            guide.LinePattern = LinePattern.Dotted;
        }
        if (variances)
        {
            var zp = top.Add.HorizontalLine(0.5 + fit.Readout.AddedNoise);
            zp.Color = Colors.Black;
            zp.LinePattern = LinePattern.Dotted;
            zp.LegendText = "zero-point + added noise";
        }
        string headline = string.Join(";  ", fit.Derived.Where(d => d.Name is "bath_temperature_k" or "thermal_decoherence_rate_per_s")
            .Select(d => $"{(d.Name == "bath_temperature_k" ? "T" : "γ·n_th")} = {FitTables.Interval(d, Plotting.QuantityLabels.For(d.Name))}"));
        top.Title($"{fit.Scenario.Name}: fit of {string.Join(", ", fit.Paths.Select(p => Plotting.QuantityLabels.For(p.Text, fit.Scenario).Name))}" +
                  (headline.Length > 0 ? $"\n{headline} ({fit.Confidence * 100:G3}% intervals)" : ""));
        top.YLabel(variances ? "quadrature variance (quanta)" : "occupancy (quanta)");
        bottom.YLabel("residual (σ)");
        double first = fit.Delays.Min(d => d.Data.DelayS), last = fit.Delays.Max(d => d.Data.DelayS);
        string name = $"delay from the start of {fit.Scenario.Readout!.Stage}";
        axis.Apply(top.Axes.Bottom, name, first, last);
        axis.Apply(bottom.Axes.Bottom, name, first, last);
        top.Axes.Bottom.Label.Text = "";
        Plotting.Ticks.Linear(top.Axes.Left);
        Plotting.Ticks.Linear(bottom.Axes.Left);
        bottom.Axes.SetLimitsY(-4, 4);
        // The legend sits in a fixed right margin of both panels, so their data areas stay aligned.
        Plotting.Figure.LegendOutside(top);
        top.Layout.Fixed(new PixelPadding(90, 340, 60, 90));
        bottom.Layout.Fixed(new PixelPadding(90, 340, 70, 20));

        var multi = new Multiplot();
        multi.Reset(top);
        multi.AddPlot(bottom);
        var layout = new ScottPlot.MultiplotLayouts.DraggableRows();
        layout.SetHeights([620f, 280f]);
        multi.Layout = layout;
        return Plotting.Figure.Save(multi, stem, 1400, 900);
    }
}

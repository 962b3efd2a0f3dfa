using ScottPlot;
using System.Globalization;
using System.Text;
using System.Text.Json.Nodes;
using Decohere.Analyses.Fitting.Joint;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports.Plotting;

namespace Decohere.Reports;

/// <summary>Writes a joint fit's joint-fit.parquet (one row per data set and point), joint-fit.json, joint-fit.png/.svg (a panel per data set) and joint-fit.md.</summary>
public sealed class JointFitReport : IReport<JointFitResult>
{
    /// <summary>Columns of joint-fit.parquet, in file order.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.String("data_set"), ColumnSpec.String("kind"), ColumnSpec.String("quantity"),
        ColumnSpec.Double("x"), ColumnSpec.String("x_unit"),
        ColumnSpec.Double("observed"), ColumnSpec.NullableDouble("observed_err"),
        ColumnSpec.NullableDouble("model"), ColumnSpec.NullableDouble("model_sd"), ColumnSpec.NullableDouble("residual"),
        ColumnSpec.String("unit"),
    ];

    /// <inheritdoc/>
    public async Task<IReadOnlyList<string>> WriteAsync(JointFitResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        string stem = Path.Combine(directory, "joint-fit"), parquet = stem + ".parquet", json = stem + ".json", md = stem + ".md";
        await WriteTableAsync(result, parquet, cancel);
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(Json(result), json);
        AtomicFile.WriteAllText(md, Markdown(result));
        cancel.ThrowIfCancellationRequested();
        return [json, parquet, .. Figure.Save(Plot(result), stem, 600 * result.DataSets.Length, 560), md];
    }

    private static Task WriteTableAsync(JointFitResult r, string path, CancellationToken cancel)
    {
        var rows = r.DataSets.SelectMany(s => s.Points.Select((p, k) => (Set: s, Point: p, k))).ToArray();
        static double? Finite(double v) => double.IsFinite(v) ? v : null;
        Array[] columns =
        [
            rows.Select(x => x.Set.Name).ToArray(), rows.Select(x => x.Set.Kind).ToArray(), rows.Select(x => x.Point.Quantity).ToArray(),
            rows.Select(x => x.Point.X).ToArray(), rows.Select(x => x.Set.Axis.Unit).ToArray(),
            rows.Select(x => x.Point.Observed).ToArray(), rows.Select(x => x.Point.Error is { } e ? Finite(e) : null).ToArray(),
            rows.Select(x => Finite(x.Set.Model[x.k])).ToArray(), rows.Select(x => Finite(x.Set.ModelSd[x.k])).ToArray(),
            rows.Select(x => Finite(x.Set.Residuals[x.k])).ToArray(), rows.Select(x => x.Set.ValueUnit).ToArray(),
        ];
        var keys = new Dictionary<string, string>(r.Provenance.ToKeyValues())
        {
            ["decohere.joint_fit.residual"] = "delays: (observed − model)/σ with σ = model·√(2/(N − 1)) for variances, the stated error for occupancies; " +
                "ringdown: (observed − model)/model for energies, /σ for amplitudes; cooling: /occupancy_err (or the rms residual)",
        };
        return ParquetTable.WriteAsync(path, Columns, columns, keys, cancel: cancel);
    }

    /// <summary>The content of joint-fit.json.</summary>
    public static JsonObject Json(JointFitResult r)
    {
        var root = SummaryJson.ProvenanceRoot(r.Provenance);
        root["fit_file"] = Path.GetFileName(r.Problem.Source);
        root["confidence"] = r.Settings.Confidence;
        root["parameters"] = new JsonObject(r.Parameters.Select(e =>
        {
            var o = FitReport.EstimateJson(e.Estimate, e.Parameter.Unit is { Length: > 0 } u ? u : "");
            o["shared"] = e.Parameter.Shared;
            o["data_sets"] = SummaryJson.Strings(e.Parameter.DataSets);
            o["targets"] = SummaryJson.Strings(e.Parameter.Targets);
            o["start"] = SummaryJson.Number(e.Parameter.Start);
            o["prior"] = r.Problem.Priors.FirstOrDefault(p => p.Index == r.Parameters.IndexOf(e)).Prior is { } q ? Prior(q) : null;
            return KeyValuePair.Create<string, JsonNode?>(e.Parameter.Name, o);
        }));
        root["derived"] = new JsonArray([.. r.Derived.Select(d =>
        {
            var o = FitReport.EstimateJson(d.Estimate, "K");
            o["name"] = d.Name;
            o["parameter"] = d.Parameter;
            o["mode"] = d.Mode;
            return (JsonNode)o;
        })]);
        int n = r.Parameters.Length;
        root["correlation"] = new JsonObject
        {
            ["parameters"] = SummaryJson.Strings(r.Parameters.Select(e => e.Parameter.Name)),
            ["matrix"] = new JsonArray([.. Enumerable.Range(0, n).Select(i => (JsonNode)new JsonArray([.. Enumerable.Range(0, n).Select(j => SummaryJson.Number(r.Correlation[i, j]))]))]),
        };
        root["data_sets"] = new JsonObject(r.DataSets.Select(s =>
        {
            var o = new JsonObject
            {
                ["kind"] = s.Kind,
                ["file"] = s.Source,
                ["likelihood"] = s.Likelihood,
                ["points"] = s.Points.Length,
                ["statistics"] = s.Statistics,
                ["deviance"] = SummaryJson.Number(s.Deviance),
                ["deviance_is_absolute"] = s.Absolute,
                ["degrees_of_freedom"] = SummaryJson.Number(s.DegreesOfFreedom),
            };
            SummaryJson.Set(o, "p_value", s.PValue, s.Absolute ? "no degrees of freedom left" : "the likelihood profiles out an unknown noise scale or is not χ²-like: no absolute goodness of fit");
            o["set"] = new JsonObject(s.Uses.Select(u => KeyValuePair.Create<string, JsonNode?>(u.Key, u.Parameter)));
            if (s.Fitted is { } scenario)
            {
                o["scenario"] = scenario.Name;
                // The scenario's paths at the optimum, in SI units: what to write into the scenario file before planning.
                o["scenario_values"] = new JsonObject(s.Uses.Where(u => !u.Key.StartsWith("heating.", StringComparison.Ordinal)).Select(u =>
                {
                    var path = Scenarios.ParameterPath.Parse(u.Key, scenario);
                    return KeyValuePair.Create<string, JsonNode?>(u.Key, new JsonObject
                    {
                        ["value"] = SummaryJson.Number(path.Get(scenario)),
                        ["unit"] = Quantity.SiUnit(path.Dimension),
                        ["written"] = Quantity.Format(path.Get(scenario), path.Dimension, 6),
                    });
                }));
            }
            return KeyValuePair.Create<string, JsonNode?>(s.Name, o);
        }));
        root["goodness_of_fit"] = FitReport.GoodnessJson(r.Goodness);
        root["evaluations"] = r.Work.Evaluations;
        root["elapsed_s"] = Math.Round(r.Work.Elapsed.TotalSeconds, 3);
        root["warnings"] = SummaryJson.Strings(r.Warnings);
        return root;
    }

    private static JsonObject Prior(Decohere.Analyses.Fitting.FitPrior q) => q.IsGaussian
        ? new JsonObject { ["kind"] = "gaussian", ["mean"] = SummaryJson.Number(q.Mean!.Value), ["sd"] = SummaryJson.Number(q.Sd!.Value) }
        : new JsonObject { ["kind"] = "bounded", ["low"] = SummaryJson.Number(q.Low!.Value), ["high"] = SummaryJson.Number(q.High!.Value) };

    private static string G(double v, string format = "G4") => double.IsFinite(v) ? v.ToString(format, CultureInfo.InvariantCulture) : "—";

    /// <summary>The results table as Markdown: parameters with intervals, then each data set's goodness of fit.</summary>
    public static string Markdown(JointFitResult r)
    {
        var md = new StringBuilder();
        md.AppendLine($"# Joint fit {r.Problem.Name}").AppendLine();
        md.AppendLine($"| parameter | value | std. error | {r.Settings.Confidence * 100:G3}% interval | unit | method | data sets |");
        md.AppendLine("|---|---:|---:|---:|---|---|---|");
        foreach (var e in r.Parameters)
        {
            var q = e.Estimate;
            string high = q.HighReached ? G(q.High) : "∞";
            md.AppendLine($"| {e.Parameter.Name} | {G(q.Value)} | {G(q.StandardError, "G2")} | {G(q.Low)} – {high} | {e.Parameter.Unit} | {q.Method} | " +
                $"{string.Join(", ", e.Parameter.DataSets)}{(e.Parameter.Shared ? " (shared)" : "")} |");
        }
        foreach (var d in r.Derived)
        {
            var q = d.Estimate;
            md.AppendLine($"| bath temperature of {d.Mode} (from {d.Parameter}) | {G(q.Value)} | {G(q.StandardError, "G2")} | {G(q.Low)} – {(q.HighReached ? G(q.High) : "∞")} | K | {q.Method} | |");
        }
        md.AppendLine().AppendLine("| data set | kind | points | deviance | degrees of freedom | p-value |");
        md.AppendLine("|---|---|---:|---:|---:|---:|");
        foreach (var s in r.DataSets)
            md.AppendLine($"| {s.Name} | {s.Kind} | {s.Points.Length} | {G(s.Deviance, "G5")} | {G(s.DegreesOfFreedom, "G4")} | {(s.PValue is { } p ? G(p, "G3") : "—")} |");
        var g = r.Goodness;
        md.AppendLine($"| total | | {r.DataSets.Sum(s => s.Points.Length)} | {G(g.Deviance, "G5")} | {g.DegreesOfFreedom} | {G(g.PValue, "G3")} |");
        if (r.Warnings.Length > 0)
        {
            md.AppendLine().AppendLine("Warnings:").AppendLine();
            foreach (var w in r.Warnings) md.AppendLine($"- {w}");
        }
        return md.ToString();
    }

    private static Multiplot Plot(JointFitResult r)
    {
        var plots = r.DataSets.Select(Panel).ToArray();
        var multi = new Multiplot();
        multi.Reset(plots[0]);
        foreach (var p in plots.Skip(1)) multi.AddPlot(p);
        multi.Layout = new ScottPlot.MultiplotLayouts.Grid(1, plots.Length);
        return multi;
    }

    private static Plot Panel(JointDataSetFit s)
    {
        var plot = Figure.New();
        // Cooperativities and ring-down energies span decades: both are drawn on log axes, as their own commands draw them.
        bool logX = s.Kind == "cooling";
        bool logY = s.Kind == "cooling" || (s.Kind == "ringdown" && s.Points.All(p => p.Observed > 0));
        var unit = s.Axis.Unit == "s" ? DisplayUnits.For(Dimension.Time, s.Points.Select(p => p.X)) : new DisplayUnit("", 1);
        double X(double v) => logX ? Math.Log10(v) : unit.From(v);
        double Y(double v) => logY ? Math.Log10(Math.Max(v, 1e-300)) : v;
        var quantities = s.Points.Select(p => p.Quantity).Distinct().ToArray();
        for (int q = 0; q < quantities.Length; q++)
        {
            var idx = Enumerable.Range(0, s.Points.Length).Where(k => s.Points[k].Quantity == quantities[q]).OrderBy(k => s.Points[k].X).ToArray();
            var data = plot.Add.ScatterPoints(idx.Select(k => X(s.Points[k].X)).ToArray(), idx.Select(k => Y(s.Points[k].Observed)).ToArray());
            data.Color = Figure.Colour(q).WithAlpha(0.7);
            data.MarkerSize = 6;
            data.LegendText = $"{quantities[q]} measured";
            var model = plot.Add.ScatterLine(idx.Select(k => X(s.Points[k].X)).ToArray(), idx.Select(k => Y(s.Model[k])).ToArray());
            model.Color = Figure.Colour(q);
            model.LineWidth = Figure.LineWidth;
            model.LegendText = $"{quantities[q]} joint fit";
        }
        if (logX) Ticks.Log(plot.Axes.Bottom, s.Points.Min(p => X(p.X)), s.Points.Max(p => X(p.X)));
        else Ticks.Linear(plot.Axes.Bottom);
        if (logY)
        {
            var ys = s.Points.Select(p => Y(p.Observed)).Concat(s.Model.Where(double.IsFinite).Select(Y)).ToArray();
            Ticks.Log(plot.Axes.Left, ys.Min(), ys.Max());
        }
        else Ticks.Linear(plot.Axes.Left);
        string xUnit = s.Axis.Unit == "s" ? unit.Symbol : s.Axis.Unit;
        plot.XLabel(xUnit.Length > 0 ? $"{s.Axis.Name} ({xUnit})" : s.Axis.Name);
        plot.YLabel(string.Join(", ", quantities) + (s.ValueUnit.Length > 0 ? $" ({s.ValueUnit})" : ""));
        plot.Title($"{s.Name} ({s.Kind}){(s.PValue is { } p ? $": p = {p:G2}" : "")}");
        // A curve that falls from the left (sideband ratios against probe strength) keeps its first points clear of the legend.
        bool falling = s.Points.Length > 1 && s.Points.MinBy(p => p.X)!.Observed > s.Points.MaxBy(p => p.X)!.Observed;
        plot.ShowLegend(falling && !logY ? Alignment.UpperRight : Alignment.UpperLeft);
        return plot;
    }
}

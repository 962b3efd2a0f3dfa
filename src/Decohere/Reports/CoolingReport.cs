using ScottPlot;
using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Cooling;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>Writes cooling.parquet, cooling.json and cooling.png/.svg, each atomically.</summary>
public sealed class CoolingReport : IReport<CoolingResult>
{
    /// <summary>Columns of cooling.parquet: one row per cooperativity; occupancies in quanta, the shares sum to occupancy.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.Double("cooperativity"), ColumnSpec.Double("coupling_hz"), ColumnSpec.Double("cavity_occupancy"),
        ColumnSpec.Double("cavity_heating"), ColumnSpec.Double("phase_noise_occupancy"), ColumnSpec.Double("occupancy"),
        ColumnSpec.Double("thermal"), ColumnSpec.Double("cavity_bath"), ColumnSpec.Double("drive_heating"), ColumnSpec.Double("phase_noise"),
        ColumnSpec.Double("quantum"), ColumnSpec.String("limit"),
    ];

    /// <inheritdoc/>
    public Task<IReadOnlyList<string>> WriteAsync(CoolingResult result, string directory, CancellationToken cancel = default) =>
        LabReportFiles.Write(directory, "cooling", path => WriteTable(result, path, cancel), () => Json(result), () => Plot(result), cancel);

    private static Task WriteTable(CoolingResult result, string path, CancellationToken cancel)
    {
        var rows = result.Rows;
        double[] Col(Func<CoolingRow, double> f) => [.. rows.Select(f)];
        var keys = new Dictionary<string, string>(result.Provenance.ToKeyValues())
        {
            ["decohere.cooling.stage"] = result.Stage,
            ["decohere.cooling.tone"] = result.Tone.ToString(CultureInfo.InvariantCulture),
        };
        return ParquetTable.WriteAsync(path, Columns,
        [
            Col(r => r.Cooperativity), Col(r => r.CouplingHz), Col(r => r.CavityOccupancy), Col(r => r.CavityHeating), Col(r => r.PhaseNoise),
            Col(r => r.Occupancy), Col(r => r.Thermal), Col(r => r.CavityBase), Col(r => r.HeatingShare), Col(r => r.PhaseNoiseShare),
            Col(r => r.Quantum), rows.Select(r => r.Limit).ToArray(),
        ], keys, cancel: cancel);
    }

    private static JsonObject RowJson(CoolingRow r) => new()
    {
        ["cooperativity"] = SummaryJson.Number(r.Cooperativity),
        ["coupling_hz"] = SummaryJson.Number(r.CouplingHz),
        ["occupancy"] = SummaryJson.Number(r.Occupancy),
        ["cavity_occupancy"] = SummaryJson.Number(r.CavityOccupancy),
        ["limit"] = r.Limit,
        ["shares"] = new JsonObject
        {
            ["thermal"] = SummaryJson.Number(r.Thermal),
            ["cavity_bath"] = SummaryJson.Number(r.CavityBase),
            ["drive_heating"] = SummaryJson.Number(r.HeatingShare),
            ["phase_noise"] = SummaryJson.Number(r.PhaseNoiseShare),
            ["quantum"] = SummaryJson.Number(r.Quantum),
        },
    };

    /// <summary>The content of cooling.json.</summary>
    public static JsonObject Json(CoolingResult result)
    {
        var root = SummaryJson.ProvenanceRoot(result.Provenance);
        root["stage"] = result.Stage;
        root["tone"] = result.Tone;
        root["mechanical"] = result.Mechanical;
        root["cavity"] = result.Cavity;
        root["phase_noise_dbc_per_hz"] = result.Settings.PhaseNoiseDbcPerHz is { } l ? SummaryJson.Number(l) : null;
        root["filter_db"] = result.Settings.FilterDb;
        root["minimum"] = RowJson(result.Minimum);
        root["minimum_at_range_edge"] = result.MinimumAtEdge;
        if (result.Fit is { } f)
            root["heating_fit"] = new JsonObject
            {
                ["law"] = "extra cavity occupancy = coefficient · C^exponent",
                ["coefficient"] = SummaryJson.Number(f.Coefficient),
                ["coefficient_stderr"] = SummaryJson.Number(f.CoefficientError),
                ["coefficient_ci"] = Interval(f.CoefficientLow, f.CoefficientHigh),
                ["exponent"] = SummaryJson.Number(f.Exponent),
                ["exponent_stderr"] = SummaryJson.Number(f.ExponentError),
                ["exponent_ci"] = Interval(f.ExponentLow, f.ExponentHigh),
                ["chi_square"] = SummaryJson.Number(f.ChiSquare),
                ["degrees_of_freedom"] = f.DegreesOfFreedom,
                ["errors_from_data"] = f.ErrorsGiven,
                ["points"] = new JsonArray([.. result.Data.Select((p, i) => (JsonNode)new JsonObject
                {
                    ["cooperativity"] = p.Cooperativity, ["occupancy"] = p.Occupancy,
                    ["occupancy_err"] = p.Error is { } e ? SummaryJson.Number(e) : null, ["fitted"] = SummaryJson.Number(f.Fitted[i]),
                })]),
            };
        root["warnings"] = SummaryJson.Strings(result.Warnings);
        return root;
    }

    private static JsonArray Interval(double? low, double? high) => [low is { } a ? SummaryJson.Number(a) : null, high is { } b ? SummaryJson.Number(b) : null];

    private static Plot Plot(CoolingResult result)
    {
        var plot = new Plot();
        var rows = result.Rows.OrderBy(r => r.Cooperativity).ToArray();
        double[] xs = [.. rows.Select(r => Math.Log10(r.Cooperativity))];
        double Log(double v) => Math.Log10(Math.Max(v, 1e-12));
        var total = plot.Add.ScatterLine(xs, rows.Select(r => Log(r.Occupancy)).ToArray());
        total.LineWidth = 3;
        total.Color = Colors.Black;
        total.LegendText = $"{result.Mechanical} occupancy";
        var palette = new ScottPlot.Palettes.Category10();
        var shares = new (string Name, Func<CoolingRow, double> Value)[]
        {
            ("thermal (γ n_th)", r => r.Thermal), ("cavity bath", r => r.CavityBase), ("drive heating", r => r.HeatingShare),
            ("phase noise", r => r.PhaseNoiseShare), ("quantum (zero-point)", r => r.Quantum),
        };
        for (int i = 0; i < shares.Length; i++)
        {
            if (rows.All(r => shares[i].Value(r) <= 1e-12)) continue;
            var line = plot.Add.ScatterLine(xs, rows.Select(r => Log(shares[i].Value(r))).ToArray());
            line.Color = palette.GetColor(i);
            line.LinePattern = LinePattern.Dashed;
            line.LineWidth = 2;
            line.LegendText = shares[i].Name;
        }
        var min = plot.Add.ScatterPoints(new[] { Math.Log10(result.Minimum.Cooperativity) }, new[] { Log(result.Minimum.Occupancy) });
        min.MarkerSize = 12;
        min.MarkerShape = MarkerShape.OpenCircle;
        min.Color = Colors.FireBrick;
        min.LegendText = $"minimum n = {result.Minimum.Occupancy:G3} at C = {result.Minimum.Cooperativity:G3} ({result.Minimum.Limit})";
        if (result.Data.Length > 0)
        {
            var data = plot.Add.ScatterPoints(result.Data.Select(p => Math.Log10(p.Cooperativity)).ToArray(), result.Data.Select(p => Log(p.Occupancy)).ToArray());
            data.Color = Colors.DarkGreen;
            data.MarkerSize = 9;
            data.LegendText = "measured";
            if (result.Fit is { } f)
            {
                var fitted = plot.Add.ScatterPoints(result.Data.Select(p => Math.Log10(p.Cooperativity)).ToArray(), f.Fitted.Select(Log).ToArray());
                fitted.Color = Colors.DarkGreen;
                fitted.MarkerShape = MarkerShape.Cross;
                fitted.MarkerSize = 10;
                fitted.LegendText = $"fitted heating {f.Coefficient:G3}·C^{f.Exponent:G3}";
            }
        }
        foreach (var axis in new IAxis[] { plot.Axes.Left, plot.Axes.Bottom })
            axis.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
            {
                MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
                IntegerTicksOnly = true,
                LabelFormatter = v => Math.Pow(10, v).ToString("G3", CultureInfo.InvariantCulture),
            };
        double lo = rows.Min(r => Log(r.Occupancy)), hi = rows.Max(r => Log(r.Occupancy));
        // Low enough to show every share that matters at the minimum.
        foreach (var (_, value) in shares)
            if (value(result.Minimum) > 1e-12) lo = Math.Min(lo, Log(value(result.Minimum)));
        plot.Axes.SetLimitsY(lo - 0.3, hi + 0.3);
        plot.XLabel($"cooperativity C = 4G²/(κγ) of tone {result.Tone} (log scale)");
        plot.YLabel("steady occupancy (quanta, log scale)");
        plot.Title($"{result.Scenario.Name}: sideband cooling of {result.Mechanical} in stage '{result.Stage}'");
        plot.ShowLegend(Alignment.UpperRight);
        return plot;
    }
}

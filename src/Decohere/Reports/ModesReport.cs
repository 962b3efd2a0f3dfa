using System.Globalization;
using System.Text.Json.Nodes;
using ScottPlot;
using Decohere.Analyses.Lattices;
using Decohere.IO;
using Decohere.Reports.Plotting;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>
/// Writes modes.parquet (one row per collective mode and site), modes.json (per mode and the chain's topology) and
/// modes.png/.svg (spectrum and selected mode shapes drawn on the lattice), each atomically.
/// </summary>
public sealed class ModesReport : IReport<ModesResult>
{
    /// <summary>Columns of modes.parquet: frequencies offset from the bare cavity frequency, weight = |ψ_k(site)|².</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.Int("mode_index"), ColumnSpec.Double("frequency_hz"), ColumnSpec.Double("linewidth_hz"), ColumnSpec.Int("site"),
        ColumnSpec.Double("weight"), ColumnSpec.Double("edge_weight"), ColumnSpec.Double("inverse_participation"), ColumnSpec.Bool("edge_state"),
        ColumnSpec.Double("site_x"), ColumnSpec.Double("site_y"), ColumnSpec.Int("sublattice"), ColumnSpec.String("site_edge"),
    ];

    /// <inheritdoc />
    public async Task<IReadOnlyList<string>> WriteAsync(ModesResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        string table = Path.Combine(directory, "modes.parquet"), json = Path.Combine(directory, "modes.json");
        var sites = result.Lattice.Sites;
        var rows = result.Modes.SelectMany(m => sites.Select(s => (m, s))).ToArray();
        Array[] data =
        [
            rows.Select(r => r.m.Index).ToArray(), rows.Select(r => r.m.FrequencyHz).ToArray(), rows.Select(r => r.m.LinewidthHz).ToArray(),
            rows.Select(r => r.s.Index).ToArray(), rows.Select(r => r.m.Weights[r.s.Index]).ToArray(), rows.Select(r => r.m.EdgeWeight).ToArray(),
            rows.Select(r => r.m.InverseParticipation).ToArray(), rows.Select(r => r.m.IsEdgeState).ToArray(),
            rows.Select(r => r.s.X).ToArray(), rows.Select(r => r.s.Y).ToArray(), rows.Select(r => r.s.Sublattice).ToArray(),
            rows.Select(r => EdgeName(r.s.Edge)).ToArray(),
        ];
        var keys = new Dictionary<string, string>(result.Provenance.ToKeyValues())
        {
            ["decohere.modes.cavity_reference_hz"] = result.Lattice.CavityReferenceHz.ToString("R", CultureInfo.InvariantCulture),
            ["decohere.modes.lattice"] = result.Lattice.Shape,
        };
        await ParquetTable.WriteAsync(table, Columns, data, keys, cancel: cancel);
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(Json(result), json);
        cancel.ThrowIfCancellationRequested();
        return [table, json, .. Figure.Save(Plot(result), Path.Combine(directory, "modes"), 1200, 420 * (1 + (Selected(result).Length + 1) / 2))];
    }

    /// <summary>Edge type as written in files: bulk, zigzag, armchair, boundary.</summary>
    public static string EdgeName(EdgeKind e) => e switch
    {
        EdgeKind.Bulk => "bulk",
        EdgeKind.Zigzag => "zigzag",
        EdgeKind.Armchair => "armchair",
        _ => "boundary",
    };

    /// <summary>The content of modes.json.</summary>
    public static JsonObject Json(ModesResult result)
    {
        var root = SummaryJson.ProvenanceRoot(result.Provenance);
        root["lattice"] = result.Lattice.Shape;
        root["sites"] = result.Lattice.Count;
        root["bonds"] = result.Lattice.Bonds.Length;
        root["cavity_reference_hz"] = result.Lattice.CavityReferenceHz;
        root["boundary_share"] = result.BoundaryShare;
        root["edge_states"] = new JsonArray(result.Modes.Where(m => m.IsEdgeState).Select(m => (JsonNode)JsonValue.Create(m.Index)).ToArray());
        root["modes"] = new JsonArray(result.Modes.Select(m => (JsonNode)new JsonObject
        {
            ["mode_index"] = m.Index,
            ["frequency_hz"] = SummaryJson.Number(m.FrequencyHz),
            ["linewidth_hz"] = SummaryJson.Number(m.LinewidthHz),
            ["edge_weight"] = SummaryJson.Number(m.EdgeWeight),
            ["inverse_participation"] = SummaryJson.Number(m.InverseParticipation),
            ["edge_state"] = m.IsEdgeState,
        }).ToArray());
        if (result.Chain is { } c)
            root["chain"] = new JsonObject
            {
                ["intra_cell_coupling_hz"] = c.IntraHz,
                ["inter_cell_coupling_hz"] = c.InterHz,
                ["winding_number"] = c.Winding,
                ["zak_phase_rad"] = c.ZakPhaseRad,
                ["inner_band_edge_hz"] = c.GapEdgeHz,
                ["outer_band_edge_hz"] = c.OuterEdgeHz,
                ["edge_state_decay_length_cells"] = c.DecayLengthCells is { } d ? SummaryJson.Number(d) : null,
            };
        root["warnings"] = SummaryJson.Strings(result.Warnings);
        return root;
    }

    // Edge states first, then the lowest and highest modes and the one nearest the bare cavity frequency; at most four.
    private static LatticeMode[] Selected(ModesResult result)
    {
        var modes = result.Modes;
        var picks = modes.Where(m => m.IsEdgeState).Take(2).ToList();
        foreach (var m in new[] { modes[0], modes.MinBy(m => Math.Abs(m.FrequencyHz))!, modes[^1] })
            if (picks.Count < 4 && !picks.Contains(m)) picks.Add(m);
        return [.. picks.OrderBy(m => m.Index)];
    }

    private static Multiplot Plot(ModesResult result)
    {
        var spectrum = new Plot();
        double[] index = result.Modes.Select(m => (double)m.Index).ToArray();
        double[] mhz = result.Modes.Select(m => m.FrequencyHz / 1e6).ToArray();
        var bulk = spectrum.Add.ScatterPoints(index.Where((_, k) => !result.Modes[k].IsEdgeState).ToArray(), mhz.Where((_, k) => !result.Modes[k].IsEdgeState).ToArray());
        bulk.Color = Colors.SteelBlue;
        bulk.MarkerSize = 8;
        bulk.LegendText = "collective modes";
        if (result.Modes.Any(m => m.IsEdgeState))
        {
            var edge = spectrum.Add.ScatterPoints(index.Where((_, k) => result.Modes[k].IsEdgeState).ToArray(), mhz.Where((_, k) => result.Modes[k].IsEdgeState).ToArray());
            edge.Color = Colors.FireBrick;
            edge.MarkerSize = 11;
            edge.LegendText = "edge states";
        }
        if (result.Chain is { } c)
        {
            double[] edges = [c.GapEdgeHz, -c.GapEdgeHz, c.OuterEdgeHz, -c.OuterEdgeHz];
            for (int i = 0; i < edges.Length; i++)
            {
                var line = spectrum.Add.HorizontalLine(edges[i] / 1e6);
                line.Color = Colors.Gray;
                line.LinePattern = LinePattern.Dotted;
                if (i == 0) line.LegendText = $"bulk band edges |J₁ ± J₂|; winding {c.Winding}, Zak phase {c.ZakPhaseRad / Math.PI:F3}π";
            }
        }
        spectrum.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { IntegerTicksOnly = true };
        spectrum.XLabel("collective mode index");
        spectrum.YLabel("frequency − bare cavity frequency (MHz)");
        spectrum.Title($"{result.Scenario.Name}: {result.Lattice.Shape}");
        spectrum.ShowLegend(Alignment.UpperLeft);

        var multi = new Multiplot();
        multi.Reset(spectrum);
        var shapes = Selected(result).Select(m => Shape(result, m)).ToArray();
        // Two shape panels per row under the spectrum.
        var layout = new ScottPlot.MultiplotLayouts.CustomGrid();
        multi.Layout = layout;
        int rows = 1 + (shapes.Length + 1) / 2;
        layout.Set(spectrum, new GridCell(0, 0, rows, 2, 1, 2));
        for (int i = 0; i < shapes.Length; i++)
        {
            multi.AddPlot(shapes[i]);
            layout.Set(shapes[i], new GridCell(1 + i / 2, i % 2, rows, 2));
        }
        return multi;
    }

    private static Plot Shape(ModesResult result, LatticeMode mode)
    {
        var plot = new Plot();
        var lattice = result.Lattice;
        double max = mode.Weights.Max();
        string title = $"mode {mode.Index}: {mode.FrequencyHz / 1e6:F3} MHz, edge weight {mode.EdgeWeight:F2}{(mode.IsEdgeState ? " (edge state)" : "")}";
        if (lattice.Kind == LatticeKind.Chain)
        {
            var bars = plot.Add.Bars(mode.Weights.ToArray());
            bars.Color = mode.IsEdgeState ? Colors.FireBrick : Colors.SteelBlue;
            plot.XLabel("site");
            plot.YLabel("|ψ(site)|²");
            plot.Axes.SetLimitsY(0, 1.08 * max);
        }
        else
        {
            foreach (var b in lattice.Bonds.Where(b => b.Kind == BondKind.Nearest))
            {
                var line = plot.Add.Line(lattice.Sites[b.A].X, lattice.Sites[b.A].Y, lattice.Sites[b.B].X, lattice.Sites[b.B].Y);
                line.Color = Colors.Gray.WithAlpha(0.5);
                line.LineWidth = 1;
            }
            foreach (var s in lattice.Sites)
            {
                double w = mode.Weights[s.Index];
                // Marker area ∝ weight, so the eye reads |ψ|² directly.
                var marker = plot.Add.Marker(s.X, s.Y, MarkerShape.FilledCircle, (float)(2 + 34 * Math.Sqrt(w / max)));
                marker.Color = (mode.IsEdgeState ? Colors.FireBrick : Colors.SteelBlue).WithAlpha(s.IsBoundary ? 0.95 : 0.7);
            }
            plot.Axes.SquareUnits();
            plot.HideGrid();
            plot.Layout.Frameless();
            plot.Axes.Margins(0.12, 0.12);
        }
        plot.Title(title, size: 13);
        return plot;
    }
}

using System.Globalization;
using ScottPlot;
using Decohere.Analyses.Lattices;
using Decohere.IO;
using Decohere.Reports.Plotting;

namespace Decohere.Reports;

/// <summary>
/// Writes the collective modes (as <see cref="ModesReport"/>) and the spectroscopy: spectroscopy.parquet, one row per
/// collective mode and drum, the measured columns first under the names <c>decohere reconstruct</c> reads, and
/// spectroscopy.png/.svg (true and measured participation as maps over mode and site).
/// </summary>
public sealed class ModesSpectroscopyReport : IReport<SpectroscopyResult>
{
    /// <summary>Columns of spectroscopy.parquet. Frequencies are offsets (collective modes from the bare cavity, drums from their reference) in Hz.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.Int("mode_index"), ColumnSpec.Int("site"),
        ColumnSpec.Double("mode_frequency_hz"), ColumnSpec.Double("mode_frequency_err_hz"),
        ColumnSpec.NullableDouble("damping_weight"), ColumnSpec.NullableDouble("damping_weight_err"),
        ColumnSpec.NullableDouble("participation"), ColumnSpec.NullableDouble("participation_err"),
        ColumnSpec.NullableDouble("measured_linewidth_hz"), ColumnSpec.NullableDouble("measured_linewidth_err_hz"),
        ColumnSpec.Double("drum_detuning_hz"), ColumnSpec.Double("photons"), ColumnSpec.Int("averages"),
        ColumnSpec.Double("model_mode_frequency_hz"), ColumnSpec.Double("model_mode_linewidth_hz"), ColumnSpec.Double("model_participation"),
        ColumnSpec.Double("model_damping_hz"), ColumnSpec.Double("model_frequency_shift_hz"), ColumnSpec.Double("formula_damping_hz"),
        ColumnSpec.Double("implied_participation"),
    ];

    /// <inheritdoc />
    public async Task<IReadOnlyList<string>> WriteAsync(SpectroscopyResult result, string directory, CancellationToken cancel = default)
    {
        var paths = (await new ModesReport().WriteAsync(result.Modes, directory, cancel)).ToList();
        string table = Path.Combine(directory, "spectroscopy.parquet");
        var r = result.Rows;
        var s = result.Settings;
        Array[] data =
        [
            r.Select(x => x.ModeIndex).ToArray(), r.Select(x => x.Site).ToArray(),
            r.Select(x => x.MeasuredModeFrequencyHz).ToArray(), r.Select(_ => s.FrequencyErrorHz).ToArray(),
            r.Select(x => x.MeasuredDampingWeight).ToArray(), r.Select(x => x.MeasuredDampingWeightErr).ToArray(),
            r.Select(x => x.MeasuredParticipation).ToArray(), r.Select(x => x.MeasuredParticipationErr).ToArray(),
            r.Select(x => x.MeasuredLinewidthHz).ToArray(), r.Select(x => x.MeasuredLinewidthErrHz).ToArray(),
            r.Select(x => x.DrumDetuningHz).ToArray(), r.Select(_ => s.Photons).ToArray(), r.Select(_ => s.Averages).ToArray(),
            r.Select(x => x.ModeFrequencyHz).ToArray(), r.Select(x => x.ModeLinewidthHz).ToArray(), r.Select(x => x.Participation).ToArray(),
            r.Select(x => x.ModelDampingHz).ToArray(), r.Select(x => x.ModelShiftHz).ToArray(), r.Select(x => x.FormulaDampingHz).ToArray(),
            r.Select(x => x.ModelParticipation).ToArray(),
        ];
        var keys = new Dictionary<string, string>(result.Provenance.ToKeyValues())
        {
            ["decohere.spectroscopy.photons"] = s.Photons.ToString("R", CultureInfo.InvariantCulture),
            ["decohere.spectroscopy.averages"] = s.Averages.ToString(CultureInfo.InvariantCulture),
            ["decohere.spectroscopy.points"] = s.Points.ToString(CultureInfo.InvariantCulture),
            ["decohere.spectroscopy.floor"] = s.Floor.ToString("R", CultureInfo.InvariantCulture),
        };
        await ParquetTable.WriteAsync(table, Columns, data, keys, cancel: cancel);
        cancel.ThrowIfCancellationRequested();
        var multi = new Multiplot();
        var truth = Map(result, x => x.Participation, "|ψ_k(j)|², model");
        var measured = Map(result, x => x.MeasuredParticipation ?? double.NaN, $"measured ({s.Averages} averages, {s.Photons:G3} photons)");
        truth.Title($"{result.Modes.Scenario.Name}: participation of each drum in each collective mode");
        multi.Reset(truth);
        multi.AddPlot(measured);
        var layout = new ScottPlot.MultiplotLayouts.CustomGrid();
        layout.Set(truth, new GridCell(0, 0, 1, 2));
        layout.Set(measured, new GridCell(0, 1, 1, 2));
        multi.Layout = layout;
        paths.Add(table);
        paths.AddRange(Figure.Save(multi, Path.Combine(directory, "spectroscopy"), 1400, 650));
        return paths;
    }

    private static Plot Map(SpectroscopyResult result, Func<SpectroscopyRow, double> value, string label)
    {
        int modes = result.Modes.Modes.Length, sites = result.Modes.Lattice.Count;
        var z = new double[modes, sites];
        foreach (var row in result.Rows) z[modes - 1 - row.ModeIndex, row.Site] = value(row);
        var plot = new Plot();
        var map = plot.Add.Heatmap(z);
        map.Colormap = new ScottPlot.Colormaps.Viridis();
        map.Position = new CoordinateRect(-0.5, sites - 0.5, -0.5, modes - 0.5);
        var bar = plot.Add.ColorBar(map);
        bar.Label = label;
        plot.XLabel("site (drum)");
        plot.YLabel("collective mode index");
        plot.Axes.SetLimits(-0.5, sites - 0.5, -0.5, modes - 0.5);
        return plot;
    }
}

using System.Collections.Immutable;
using System.Globalization;
using Decohere.Core;
using Decohere.Statistics;

namespace Decohere.IO;

/// <summary>
/// Reads measured collective modes for <c>decohere reconstruct</c> from CSV or Parquet: one row per mode and site with
/// <c>mode_index, mode_frequency_hz, mode_frequency_err_hz</c> and optionally <c>site</c> with <c>damping_weight,
/// damping_weight_err</c> (|ψ|⁴ from the damping; preferred) or <c>participation, participation_err</c> (|ψ|²): the
/// measured columns of spectroscopy.parquet. A row whose value is empty or null carries only its mode's frequency; every
/// row of a mode must give the same frequency and error.
/// </summary>
public static class ReconstructDataReader
{
    /// <summary>Reads the file.</summary>
    /// <exception cref="InputException">A column is missing, a value is not a number, or a mode has two frequencies; the message names the row and column.</exception>
    public static async Task<SpectroscopyData> ReadAsync(string path, CancellationToken cancel = default)
    {
        var table = await DataTable.LoadAsync(path, cancel);
        foreach (var required in new[] { "mode_index", "mode_frequency_hz", "mode_frequency_err_hz" })
            if (!table.Has(required))
                throw new InputException($"{table.Source}: no column {required}; expected mode_index, mode_frequency_hz, mode_frequency_err_hz and optionally site with damping_weight, damping_weight_err or participation, participation_err");
        // The damping weight |ψ|⁴ has the Gaussian errors of the damping it comes from, so it is preferred when present.
        bool squared = table.Has("damping_weight");
        string column = squared ? "damping_weight" : "participation", errorColumn = column + "_err";
        bool participations = table.Has(column);
        if (participations && (!table.Has("site") || !table.Has(errorColumn)))
            throw new InputException($"{table.Source}: a {column} column needs site and {errorColumn} beside it");
        var mode = Whole(table, "mode_index");
        var nu = table.Numbers("mode_frequency_hz", "mode_frequency_hz");
        var err = table.Numbers("mode_frequency_err_hz", "mode_frequency_err_hz");
        var modes = new Dictionary<int, MeasuredMode>();
        var measured = ImmutableArray.CreateBuilder<MeasuredParticipation>();
        int[] site = participations ? Whole(table, "site") : [];
        string?[] value = participations ? table.Texts(column) : [], error = participations ? table.Texts(errorColumn) : [];
        for (int r = 0; r < table.RowCount; r++)
        {
            var m = new MeasuredMode(mode[r], nu[r], err[r]);
            if (modes.TryGetValue(m.ModeIndex, out var seen) && seen != m)
                throw new InputException($"{table.Source} {table.RowLabel(r)}: mode {m.ModeIndex} has mode_frequency_hz {m.FrequencyHz} ± {m.ErrorHz}, an earlier row {seen.FrequencyHz} ± {seen.ErrorHz}; give one measurement per mode");
            modes[m.ModeIndex] = m;
            if (!participations || table.IsMissing(column, r)) continue;
            if (table.IsMissing(errorColumn, r))
                throw new InputException($"{table.Source} {table.RowLabel(r)}, column {errorColumn}: value is missing beside a {column}");
            measured.Add(new MeasuredParticipation(mode[r], site[r], Number(table, column, value[r], r), Number(table, errorColumn, error[r], r), squared));
        }
        return new SpectroscopyData([.. modes.Values.OrderBy(m => m.ModeIndex)], measured.ToImmutable());
    }

    private static int[] Whole(DataTable table, string column) => table.Numbers(column, column).Select((v, r) =>
        v == Math.Floor(v) && Math.Abs(v) < int.MaxValue ? (int)v
            : throw new InputException($"{table.Source} {table.RowLabel(r)}, column {column}: {v.ToString(CultureInfo.InvariantCulture)} is not a whole number")).ToArray();

    private static double Number(DataTable table, string column, string? text, int r) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) && double.IsFinite(v) ? v
            : throw new InputException($"{table.Source} {table.RowLabel(r)}, column {column}: '{text}' is not a finite number");
}

using System.Collections.Immutable;
using Decohere.Analyses.Cooling;
using Decohere.Analyses.Ringdown;
using Decohere.Analyses.Spectra;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>Data files of the lab analyses (cooling curves, ring-downs, sideband asymmetries), read through <see cref="DataTable"/> (CSV, Parquet or HDF5).</summary>
public static class LabDataReader
{
    /// <summary>Reads (cooperativity, occupancy[, occupancy_err]) rows through the project's data table reader.</summary>
    /// <exception cref="InputException">A column is missing or a value is not a finite number.</exception>
    public static async Task<IReadOnlyList<CoolingPoint>> ReadCoolingAsync(string path, CancellationToken cancel)
    {
        var table = await DataTable.LoadAsync(path, cancel);
        Require(table, "cooperativity", "occupancy");
        var c = Positive(table, "cooperativity");
        var n = table.Numbers("occupancy", "occupancy");
        var err = table.Has("occupancy_err") ? Positive(table, "occupancy_err") : null;
        return [.. c.Select((x, r) => new CoolingPoint(x, n[r], err?[r]))];
    }

    /// <summary>
    /// Reads measured sideband asymmetries: <c>ratio</c> ξ = (P₋/Γ₋)/(P₊/Γ₊) with its standard error <c>ratio_err</c>, and
    /// optionally <c>coupling_hz</c>, the probe tones' coupling G/2π of each point (a series against probe strength).
    /// </summary>
    /// <exception cref="InputException">A column is missing, or a value is not finite or out of range.</exception>
    public static async Task<IReadOnlyList<SidebandRatioPoint>> ReadSidebandsAsync(string path, CancellationToken cancel)
    {
        var table = await DataTable.LoadAsync(path, cancel);
        Require(table, "ratio", "ratio_err");
        var ratio = Positive(table, "ratio");
        var err = Positive(table, "ratio_err");
        var coupling = table.Has("coupling_hz") ? Positive(table, "coupling_hz") : null;
        return [.. ratio.Select((x, r) => new SidebandRatioPoint(coupling?[r], x, err[r]))];
    }

    /// <summary>Reads a ring-down through the project's data table reader: time_s and amplitude [sigma] or energy.</summary>
    /// <exception cref="InputException">The columns are missing or ambiguous, or a value is not a finite number.</exception>
    public static async Task<RingdownData> ReadRingdownAsync(string path, double timeScale, double? sigma, CancellationToken cancel)
    {
        var table = await DataTable.LoadAsync(path, cancel);
        string columns = string.Join(", ", table.ColumnNames);
        Require(table, "time_s");
        bool amplitude = table.Has("amplitude"), energy = table.Has("energy");
        if (amplitude == energy)
            throw new InputException($"data file {table.Source}: give exactly one of the columns 'amplitude' or 'energy'; columns: {columns}");
        if (sigma is { } s && !(s > 0 && double.IsFinite(s))) throw new InputException($"sigma: {s} must be finite and > 0");
        if (energy && (sigma is not null || table.Has("sigma")))
            throw new InputException($"sigma: an energy ring-down has exponential (thermal) noise, not a Gaussian σ; drop it or give amplitudes");
        ImmutableArray<double> times = [.. table.Numbers("time_s", "time_s").Select(t => t * timeScale)];
        ImmutableArray<double> values = [.. table.Numbers(amplitude ? "amplitude" : "energy", amplitude ? "amplitude" : "energy")];
        ImmutableArray<double>? sigmas = sigma is { } common ? [.. Enumerable.Repeat(common, values.Length)]
            : table.Has("sigma") ? [.. table.Numbers("sigma", "sigma")] : null;
        return new RingdownData(table.Source, amplitude ? RingdownKind.Amplitude : RingdownKind.Energy, times, values, sigmas);
    }

    private static void Require(DataTable table, params string[] columns)
    {
        foreach (string column in columns)
            if (!table.Has(column)) throw new InputException($"data file {table.Source}: missing column '{column}'; columns: {string.Join(", ", table.ColumnNames)}");
    }

    // A column whose every value must be > 0 (a cooperativity, a stated error, a ratio of powers), refused by row.
    private static double[] Positive(DataTable table, string column)
    {
        var values = table.Numbers(column, column);
        for (int r = 0; r < values.Length; r++)
            if (!(values[r] > 0)) throw new InputException($"data file {table.Source} {table.RowLabel(r)}, column {column}: {values[r]} must be > 0");
        return values;
    }
}

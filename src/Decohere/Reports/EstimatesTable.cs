using Decohere.Core;
using Decohere.IO;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>
/// estimates.parquet: one row per readout delay with the sample moments of (i, q), the added noise subtracted, and for each
/// inferred quantity Q ∈ {var_x, var_p, cov_xp, var_min, var_max, occupancy, squeezing_db} the columns Q, Q_low, Q_high
/// (two-sided interval), Q_model (covariance engine) and Q_z ((Q − Q_model)/σ), null where a value is undefined
/// (squeezing_db when the inferred var_min ≤ 0); uncertainty_product = var_min·var_max and uncertainty_violated, true when
/// its whole interval lies below ¼.
/// </summary>
public static class EstimatesTable
{
    /// <summary>The inferred quantities, in column order.</summary>
    public static readonly string[] Quantities = ["var_x", "var_p", "cov_xp", "var_min", "var_max", "occupancy", "squeezing_db", "uncertainty_product"];

    /// <summary>The columns, in file order.</summary>
    public static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Double("delay_s"), ColumnSpec.Double("time_s"), ColumnSpec.String("mode"), ColumnSpec.Long("shots"),
        ColumnSpec.Double("mean_i"), ColumnSpec.Double("mean_q"), ColumnSpec.Double("var_i"), ColumnSpec.Double("var_q"),
        ColumnSpec.Double("cov_iq"), ColumnSpec.Double("added_noise"), ColumnSpec.Double("confidence"),
        .. Quantities.SelectMany(q => new[]
        {
            ColumnSpec.NullableDouble(q), ColumnSpec.NullableDouble(q + "_low"), ColumnSpec.NullableDouble(q + "_high"),
            ColumnSpec.NullableDouble(q + "_model"), ColumnSpec.NullableDouble(q + "_z"),
        }),
        ColumnSpec.Bool("uncertainty_violated"),
    ];

    /// <summary>The estimates of a delay in <see cref="Quantities"/> order.</summary>
    public static Estimate[] Row(ReadoutEstimate e) => [e.VarX, e.VarP, e.CovXP, e.VarMin, e.VarMax, e.Occupancy, e.SqueezingDb, e.UncertaintyProduct];

    private static double? Finite(double v) => double.IsFinite(v) ? v : null;

    /// <summary>Writes the table atomically (NaN and ±∞ in the quantity columns become null).</summary>
    public static Task WriteAsync(string path, ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, double confidence,
        Provenance metadata, CancellationToken cancel = default)
    {
        var data = new List<Array>
        {
            sampler.Delays.Select(d => d.DelayS).ToArray(), sampler.Delays.Select(d => d.TimeS).ToArray(),
            new[] { sampler.Chain.Mode }, estimates.Select(e => e.Shots).ToArray(),
            estimates.Select(e => e.MeanI).ToArray(), estimates.Select(e => e.MeanQ).ToArray(),
            estimates.Select(e => e.VarI).ToArray(), estimates.Select(e => e.VarQ).ToArray(),
            estimates.Select(e => e.CovIQ).ToArray(), estimates.Select(e => e.AddedNoise).ToArray(),
            new[] { confidence },
        };
        for (int q = 0; q < Quantities.Length; q++)
        {
            var column = estimates.Select(e => Row(e)[q]).ToArray();
            data.Add(column.Select(v => Finite(v.Value)).ToArray());
            data.Add(column.Select(v => Finite(v.Low)).ToArray());
            data.Add(column.Select(v => Finite(v.High)).ToArray());
            data.Add(column.Select(v => Finite(v.Model)).ToArray());
            data.Add(column.Select(v => Finite(v.Z)).ToArray());
        }
        data.Add(estimates.Select(e => e.ViolatesUncertainty).ToArray());
        return ParquetTable.WriteAsync(path, Columns, data, metadata.ToKeyValues(), cancel: cancel);
    }
}

using System.Collections.Immutable;

namespace Decohere.Statistics;

/// <summary>The three layouts a data file can have, told apart by its columns.</summary>
public enum DataShape
{
    /// <summary>One row per shot: <c>delay_s, i, q</c> (optionally <c>mode</c>).</summary>
    Shots,
    /// <summary>One row per delay: <c>delay_s, var_i, var_q, shots</c> (optionally <c>cov_iq</c>).</summary>
    Variances,
    /// <summary>One row per delay: <c>delay_s, occupancy, occupancy_err</c>.</summary>
    Occupancies,
}

/// <summary>
/// The data at one delay, reduced to sufficient statistics: shot count, mean and unbiased sample covariance of (i, q)
/// (scatter matrix / (N − 1)), or an occupancy with its standard error.
/// </summary>
public sealed record DelayObservation(
    double DelayS,
    long Shots,
    double VarI,
    double VarQ,
    double? CovIQ,
    double MeanI,
    double MeanQ,
    double Occupancy,
    double OccupancyError,
    string Row);

/// <summary>A validated data set: its shape, the per-delay observations sorted by delay, and where it came from.</summary>
public sealed record FitData(DataShape Shape, ImmutableArray<DelayObservation> Delays, string Source)
{
    /// <summary>True when the (i, q) covariance is known at every delay (shots, or variances with cov_iq).</summary>
    public bool HasCovariance => Shape == DataShape.Shots || (Shape == DataShape.Variances && Delays.All(d => d.CovIQ is not null));

    /// <summary>Total shots over all delays (0 for occupancy data).</summary>
    public long TotalShots => Delays.Sum(d => d.Shots);
}

/// <summary>One calibration measurement: a prepared occupancy and the sample variances of both quadratures from N shots.</summary>
public sealed record CalibrationPoint(double Occupancy, double VarI, double VarQ, long Shots, string Row);

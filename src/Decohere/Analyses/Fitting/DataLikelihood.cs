using Decohere.Statistics;

namespace Decohere.Analyses.Fitting;

/// <summary>
/// The likelihood of a measured data set under the readout model's predictions, as a deviance built from the exact
/// per-delay laws in <see cref="Deviance"/>: it lives with the fit because it pairs the data's shape with the model's
/// predictions.
/// </summary>
public static class DataLikelihood
{
    /// <summary>
    /// Deviance of a data set under the predictions (one per delay, in the data's order): Wishart per delay for shots
    /// or variances with cov_iq; for variances without cov_iq, independent χ² for var_i and var_q (exact when the model's
    /// cov_iq is 0, an approximation when the quadratures are correlated); Gaussian for occupancies.
    /// </summary>
    public static double Total(FitData data, ReadOnlySpan<ReadoutPrediction> predictions)
    {
        double total = 0;
        bool joint = data.HasCovariance;
        for (int k = 0; k < data.Delays.Length; k++)
        {
            var d = data.Delays[k];
            var m = predictions[k];
            total += data.Shape switch
            {
                DataShape.Occupancies => Deviance.Gaussian(d.Occupancy, m.Occupancy, d.OccupancyError),
                _ when joint => Deviance.Wishart(d.Shots, d.VarI, d.VarQ, d.CovIQ!.Value, m.VarI, m.VarQ, m.CovIQ),
                _ => Deviance.ChiSquare(d.Shots, d.VarI, m.VarI) + Deviance.ChiSquare(d.Shots, d.VarQ, m.VarQ),
            };
        }
        return total;
    }

    /// <summary>Number of independent statistics the deviance sums (3 per delay for Wishart, 2 for paired χ², 1 per occupancy).</summary>
    public static int Terms(FitData data) =>
        data.Delays.Length * (data.Shape == DataShape.Occupancies ? 1 : data.HasCovariance ? 3 : 2);

    /// <summary>A one-line description of the likelihood used, for fit.json.</summary>
    public static string Describe(FitData data) => data.Shape switch
    {
        DataShape.Occupancies => "gaussian: occupancy with the given standard errors",
        DataShape.Shots => "wishart: per delay the (i, q) scatter matrix about the sample mean, N − 1 degrees of freedom (means estimated per delay)",
        _ when data.HasCovariance => "wishart: per delay (N − 1)·[[var_i, cov_iq], [cov_iq, var_q]], N − 1 degrees of freedom",
        _ => "chi-square: var_i and var_q independent, N − 1 degrees of freedom each (exact when the model's cov_iq is 0)",
    };
}

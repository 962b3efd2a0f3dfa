using MathNet.Numerics.Distributions;

namespace Decohere.Statistics;

/// <summary>
/// Exact inference on a Gaussian variance from N shots: (N − 1)s²/σ² follows χ² with N − 1 degrees of freedom
/// (NIST/SEMATECH e-Handbook of Statistical Methods, sec. 7.2.3 and table 1.3.6.7.4).
/// </summary>
public static class VarianceStatistics
{
    /// <summary>The p-quantile (lower tail) of χ² with ν degrees of freedom.</summary>
    public static double ChiSquareQuantile(double p, double degreesOfFreedom) => ChiSquared.InvCDF(degreesOfFreedom, p);

    /// <summary>Two-sided interval for σ² at <paramref name="confidence"/>: [(N−1)s²/χ²_{1−α/2}, (N−1)s²/χ²_{α/2}].</summary>
    public static (double Low, double High) Interval(double sampleVariance, long shots, double confidence = 0.95)
    {
        double nu = shots - 1, alpha = 1 - confidence;
        return (nu * sampleVariance / ChiSquareQuantile(1 - alpha / 2, nu), nu * sampleVariance / ChiSquareQuantile(alpha / 2, nu));
    }

    /// <summary>One-sided upper confidence bound on σ²: (N−1)s²/χ²_{1−c} with χ²_{1−c} the lower-tail (1 − c)-quantile.</summary>
    public static double UpperBound(double sampleVariance, long shots, double confidence = 0.95)
    {
        double nu = shots - 1;
        return nu * sampleVariance / ChiSquareQuantile(1 - confidence, nu);
    }

    /// <summary>
    /// Probability that the upper confidence bound of the inferred variance (measured variance minus the added noise)
    /// falls below <paramref name="threshold"/>, when the true measured variance is σ² = trueVariance + addedNoise:
    /// P[χ²_ν &lt; (threshold + n_add)·χ²_{1−c}(ν)/σ²].
    /// </summary>
    public static double ResolutionProbability(double trueVariance, double addedNoise, long shots, double threshold = 0.5, double confidence = 0.95)
    {
        double nu = shots - 1;
        double sigma2 = trueVariance + addedNoise;
        double limit = (threshold + addedNoise) * ChiSquareQuantile(1 - confidence, nu) / sigma2;
        return ChiSquared.CDF(nu, limit);
    }
}

namespace Decohere.Statistics;

/// <summary>
/// The exact likelihoods of the three data shapes, written as deviances (−2 ln L relative to the saturated model, so
/// that the minimum is itself the goodness-of-fit statistic).
/// </summary>
public static class Deviance
{
    /// <summary>
    /// Wishart deviance of one delay: the scatter matrix about the sample mean of N Gaussian (i, q) pairs is W₂(ν = N − 1, Σ)
    /// whatever the true mean (T. W. Anderson, An Introduction to Multivariate Statistical Analysis, 3rd ed., Wiley 2003,
    /// sec. 3.3 and 7.2), so with Ŝ the unbiased sample covariance, D = ν[tr(Σ⁻¹Ŝ) − ln det(Σ⁻¹Ŝ) − 2].
    /// </summary>
    public static double Wishart(long shots, double sampleVarI, double sampleVarQ, double sampleCov, double varI, double varQ, double cov)
    {
        double nu = shots - 1;
        double det = varI * varQ - cov * cov;
        if (!(det > 0) || !(varI > 0)) return double.PositiveInfinity;
        double trace = (varQ * sampleVarI - 2 * cov * sampleCov + varI * sampleVarQ) / det;
        double detSample = sampleVarI * sampleVarQ - sampleCov * sampleCov;
        return nu * (trace - Math.Log(detSample / det) - 2);
    }

    /// <summary>
    /// χ² deviance of one sample variance: (N − 1)s²/σ² ~ χ²_{N−1} (NIST/SEMATECH e-Handbook of Statistical Methods,
    /// sec. 7.2.3), a gamma likelihood whose deviance is D = ν(r − ln r − 1), r = s²/σ² (P. McCullagh, J. A. Nelder,
    /// Generalized Linear Models, 2nd ed., Chapman &amp; Hall 1989, sec. 8.3).
    /// </summary>
    public static double ChiSquare(long shots, double sampleVariance, double variance)
    {
        if (!(variance > 0)) return double.PositiveInfinity;
        double r = sampleVariance / variance;
        return (shots - 1) * (r - Math.Log(r) - 1);
    }

    /// <summary>Gaussian deviance of a value with a known standard error: ((y − μ)/σ)².</summary>
    public static double Gaussian(double value, double model, double error)
    {
        double z = (value - model) / error;
        return z * z;
    }
}

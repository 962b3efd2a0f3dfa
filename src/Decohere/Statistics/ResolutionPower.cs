using MathNet.Numerics.Distributions;
using MathNet.Numerics.RootFinding;
using Decohere.Core;
using Decohere.Numerics;

namespace Decohere.Statistics;

/// <summary>
/// Power of a squeezing measurement and the readout it needs: the probability that N shots put the exact one-sided χ²
/// upper confidence bound of the inferred variance below a threshold (NIST/SEMATECH e-Handbook of Statistical Methods,
/// sec. 7.2.3), the largest tolerable added noise and the fewest shots at a target power (Brent's method,
/// R. P. Brent, Algorithms for Minimization without Derivatives, 1973), and a Monte Carlo for an added noise known
/// only from a calibration.
/// </summary>
public static class ResolutionPower
{
    /// <summary>Closed-form power; the same as <see cref="VarianceStatistics.ResolutionProbability"/>.</summary>
    public static double ClosedForm(double trueVariance, double addedNoise, long shots, double threshold, double confidence) =>
        VarianceStatistics.ResolutionProbability(trueVariance, addedNoise, shots, threshold, confidence);

    /// <summary>
    /// Monte Carlo power when the lab subtracts a calibrated added noise n̂ = n_add + ε, ε ~ N(0, σ_cal²), instead of the
    /// true one. Each draw takes the sample variance from its exact distribution, s² = (V + n_add)·χ²_ν/ν with ν = N − 1, χ²_ν drawn as Gamma(ν/2, rate ½)
    /// (the statistic is sampled directly; no shots and no second model of the physics), and counts it as resolved when
    /// the upper bound ν s²/χ²_{1−c}(ν) − n̂ is below the threshold. Returns the fraction resolved and its binomial
    /// standard error √(p(1 − p)/draws).
    /// </summary>
    public static (double Power, double StandardError) MonteCarlo(double trueVariance, double addedNoise, long shots, double threshold,
        double confidence, double calibrationSigma, int draws, System.Random random, CancellationToken cancel = default)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(shots, 2);
        ArgumentOutOfRangeException.ThrowIfLessThan(draws, 1);
        double nu = shots - 1;
        double sigma2 = trueVariance + addedNoise;
        // ν s²/χ²_{1−c} − n̂ < thr  ⇔  s² < (thr + n̂)·χ²_{1−c}/ν; the quantile is computed once, not per draw.
        double q = VarianceStatistics.ChiSquareQuantile(1 - confidence, nu) / nu;
        // χ²_ν is Gamma(shape ν/2, rate ½); MathNet's ChiSquared.Sample sums ν squared normals for integer ν, its Gamma
        // sampler (G. Marsaglia, W. W. Tsang, ACM Trans. Math. Softw. 26, 363 (2000)) costs O(1) per draw.
        int resolved = 0;
        for (int i = 0; i < draws; i++)
        {
            if ((i & 0xFFFF) == 0) cancel.ThrowIfCancellationRequested();
            double s2 = sigma2 * Gamma.Sample(random, 0.5 * nu, 0.5) / nu;
            double estimate = calibrationSigma > 0 ? addedNoise + calibrationSigma * Normal.Sample(random, 0, 1) : addedNoise;
            if (s2 < (threshold + estimate) * q) resolved++;
        }
        double p = (double)resolved / draws;
        return (p, Math.Sqrt(p * (1 - p) / draws));
    }

    /// <summary>
    /// Largest added noise at which the closed-form power still reaches <paramref name="target"/> with N shots; null when
    /// not even a noiseless readout reaches it. Power falls with n_add towards 1 − c, so a target above 1 − c has one crossing.
    /// </summary>
    public static double? LargestAddedNoise(double trueVariance, long shots, double threshold, double confidence, double target)
    {
        double F(double n) => ClosedForm(trueVariance, n, shots, threshold, confidence) - target;
        if (F(0) < 0) return null;
        double hi = Math.Max(1, threshold);
        while (F(hi) >= 0)
        {
            hi *= 2;
            if (hi > 1e12) return double.PositiveInfinity;
        }
        return Brent.TryFindRoot(F, 0, hi, 1e-10 * hi, 200, out double root) ? root : Bisect(F, 0, hi);
    }

    /// <summary>
    /// Fewest shots (≥ 2) at which the closed-form power reaches <paramref name="target"/>; null when the variance is not
    /// below the threshold or more than <paramref name="maxShots"/> would be needed. Power rises with N when
    /// V &lt; V_thr (the bound tightens), so doubling brackets the answer and integer bisection finds it.
    /// </summary>
    public static long? FewestShots(double trueVariance, double addedNoise, double threshold, double confidence, double target, long maxShots = 1_000_000_000)
    {
        bool Reaches(long n) => ClosedForm(trueVariance, addedNoise, n, threshold, confidence) >= target;
        if (trueVariance >= threshold) return null;
        long lo = 1, hi = 2;
        while (!Reaches(hi))
        {
            lo = hi;
            hi *= 2;
            if (hi > maxShots) { if (!Reaches(maxShots)) return null; hi = maxShots; break; }
        }
        while (hi - lo > 1)
        {
            long mid = lo + (hi - lo) / 2;
            if (Reaches(mid)) hi = mid; else lo = mid;
        }
        return hi;
    }

    /// <summary>The random source of one grid point, seeded from (master seed, point index) by <see cref="Seeds.Derive"/>, so runs reproduce in any order.</summary>
    public static System.Random PointRandom(long seed, long index) => new StreamRandom(Seeds.Derive(seed, SeedStream.Tolerance, index));

    private static double Bisect(Func<double, double> f, double a, double b)
    {
        for (int i = 0; i < 200; i++)
        {
            double m = 0.5 * (a + b);
            if (f(m) >= 0) a = m; else b = m;
        }
        return 0.5 * (a + b);
    }
}

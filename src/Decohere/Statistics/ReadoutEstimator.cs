using MathNet.Numerics.Distributions;
using Decohere.Engine;
using Decohere.Core;
using Decohere.Numerics;

namespace Decohere.Statistics;

/// <summary>An estimate with its two-sided interval, the model's prediction and the z-score (estimate − model)/σ.</summary>
public readonly record struct Estimate(double Value, double Low, double High, double Model, double Z)
{
    /// <summary>Whether the interval contains the model's value.</summary>
    public bool Covers => Low <= Model && Model <= High;
}

/// <summary>What a lab infers from one delay's shots, beside the model's prediction.</summary>
/// <param name="Shots">N.</param>
/// <param name="MeanI">Sample mean of i.</param>
/// <param name="MeanQ">Sample mean of q.</param>
/// <param name="VarI">Unbiased sample variance of i.</param>
/// <param name="VarQ">Unbiased sample variance of q.</param>
/// <param name="CovIQ">Unbiased sample covariance of i and q.</param>
/// <param name="AddedNoise">The readout's input-referred added noise subtracted (quanta).</param>
/// <param name="VarX">Inferred var_x = var_i − n_add; exact χ² interval.</param>
/// <param name="VarP">Inferred var_p = var_q − n_add; exact χ² interval.</param>
/// <param name="CovXP">Inferred cov_xp = cov_iq; bootstrap interval.</param>
/// <param name="VarMin">Smaller eigenvalue of the inferred 2×2 covariance; bootstrap interval.</param>
/// <param name="VarMax">Larger eigenvalue; bootstrap interval.</param>
/// <param name="Occupancy">(var_x + var_p)/2 − ½ + (⟨x⟩² + ⟨p⟩²)/2; bootstrap interval.</param>
/// <param name="SqueezingDb">10·log10(½ / var_min), NaN when var_min ≤ 0; interval mapped from var_min's (the percentile interval is invariant under monotone maps).</param>
/// <param name="UncertaintyProduct">var_min·var_max = det V of the inferred covariance; bootstrap interval. Every physical state has
/// det V ≥ ¼ (zero-point variance ½).</param>
public sealed record ReadoutEstimate(long Shots, double MeanI, double MeanQ, double VarI, double VarQ, double CovIQ, double AddedNoise,
    Estimate VarX, Estimate VarP, Estimate CovXP, Estimate VarMin, Estimate VarMax, Estimate Occupancy, Estimate SqueezingDb,
    Estimate UncertaintyProduct)
{
    /// <summary>
    /// True when the whole interval of var_min·var_max lies below ¼: the inferred state violates the uncertainty relation
    /// det V ≥ ¼ (Robertson–Schrödinger; A. Serafini, Quantum Continuous Variables, CRC Press 2017, sec. 3.5) beyond its
    /// sampling error, so the added noise subtracted is too large (or the readout gain is mis-set).
    /// </summary>
    public bool ViolatesUncertainty => UncertaintyProduct.High < UncertaintyBound;

    /// <summary>The lower bound of var_min·var_max of a physical single-mode state: ¼ in units where the zero-point variance is ½.</summary>
    public const double UncertaintyBound = 0.25;
}

/// <summary>
/// Estimators of the readout mode's moments from (i, q) shots. Variances of single quadratures get the exact interval:
/// (N − 1)s²/σ² ~ χ²_{N−1} (NIST/SEMATECH e-Handbook of Statistical Methods, sec. 7.2.3). Eigenvalues, occupancy and
/// dB get a percentile interval from a parametric bootstrap that draws the sample covariance from its Wishart law by the
/// Bartlett decomposition (M. S. Bartlett, Proc. R. Soc. Edinb. 53, 260 (1933); B. Efron, R. Tibshirani, An Introduction to
/// the Bootstrap, Chapman &amp; Hall 1993, ch. 6 and 13) — built from the sufficient statistics, so no shot is stored.
/// </summary>
public static class ReadoutEstimator
{
    /// <summary>Estimates from one delay's statistics.</summary>
    /// <param name="statistics">Sufficient statistics of the shots (N ≥ 3).</param>
    /// <param name="addedNoise">Input-referred added noise per quadrature to subtract.</param>
    /// <param name="model">The predicted moments (null: no prediction, model and z are NaN).</param>
    /// <param name="bootstrapSeed">Seed of the bootstrap stream.</param>
    /// <param name="resamples">Bootstrap resamples.</param>
    /// <param name="confidence">Two-sided confidence.</param>
    public static ReadoutEstimate Estimate(QuadratureStatistics statistics, double addedNoise, ModeMoments? model,
        ulong bootstrapSeed, int resamples = 1000, double confidence = 0.95)
    {
        long n = statistics.Count;
        if (n < 3) throw new ArgumentOutOfRangeException(nameof(statistics), "at least 3 shots are needed");
        if (resamples < 10) throw new ArgumentOutOfRangeException(nameof(resamples), "at least 10 resamples are needed");
        double nu = n - 1;
        double si = statistics.VarianceI, sq = statistics.VarianceQ, siq = statistics.CovarianceIQ;
        double mi = statistics.MeanI, mq = statistics.MeanQ;
        var (iLow, iHigh) = VarianceStatistics.Interval(si, n, confidence);
        var (qLow, qHigh) = VarianceStatistics.Interval(sq, n, confidence);
        var inferred = Moments(si - addedNoise, sq - addedNoise, siq, mi, mq);

        // Parametric bootstrap: S* = L A Aᵀ Lᵀ/ν with S = L Lᵀ and A the Bartlett factor [[√χ²_ν, 0], [ξ, √χ²_{ν−1}]];
        // means m* = m + chol(S/N)·ξ (independent of S* for Gaussian data).
        var (l00, l10, l11) = Cholesky2(si, siq, sq);
        double rootN = 1 / Math.Sqrt(n);
        var random = new StreamRandom(bootstrapSeed);
        var min = new double[resamples];
        var max = new double[resamples];
        var cov = new double[resamples];
        var occ = new double[resamples];
        var det = new double[resamples];
        for (int r = 0; r < resamples; r++)
        {
            // χ²_ν = Gamma(ν/2, rate ½); MathNet's ChiSquared.Sample sums ν squared normals for integer ν, O(N) per draw.
            double c1 = Math.Sqrt(Gamma.Sample(random, nu / 2, 0.5)), c2 = Math.Sqrt(Gamma.Sample(random, (nu - 1) / 2, 0.5));
            double z = random.Stream.NextNormal();
            // B = L·A, S* = B Bᵀ / ν.
            double b00 = l00 * c1, b10 = l10 * c1 + l11 * z, b11 = l11 * c2;
            double sxx = b00 * b00 / nu, sxq = b00 * b10 / nu, sqq = (b10 * b10 + b11 * b11) / nu;
            double e1 = random.Stream.NextNormal(), e2 = random.Stream.NextNormal();
            double bi = mi + rootN * l00 * e1, bq = mq + rootN * (l10 * e1 + l11 * e2);
            var m = Moments(sxx - addedNoise, sqq - addedNoise, sxq, bi, bq);
            min[r] = m.VarMin;
            max[r] = m.VarMax;
            cov[r] = sxq;
            occ[r] = m.Occupancy;
            det[r] = m.VarMin * m.VarMax;
        }
        double alpha = 1 - confidence;
        (double, double, double) Percentile(double[] values)
        {
            Array.Sort(values);
            return (Quantile(values, alpha / 2), Quantile(values, 1 - alpha / 2), StandardDeviation(values));
        }
        var (minLow, minHigh, minSd) = Percentile(min);
        var (maxLow, maxHigh, maxSd) = Percentile(max);
        var (covLow, covHigh, covSd) = Percentile(cov);
        var (occLow, occHigh, occSd) = Percentile(occ);
        var (detLow, detHigh, detSd) = Percentile(det);

        double nan = double.NaN;
        var p = model;
        // Model-based standard errors for the z-scores: Var s² = 2σ⁴/ν, Var s_iq = (σ_ii σ_qq + σ_iq²)/ν (Wishart moments;
        // T. W. Anderson, An Introduction to Multivariate Statistical Analysis, 3rd ed., Wiley 2003, sec. 7.3).
        double sdI = p is { } a ? (a.VarX + addedNoise) * Math.Sqrt(2 / nu) : nan;
        double sdQ = p is { } b ? (b.VarP + addedNoise) * Math.Sqrt(2 / nu) : nan;
        double sdC = p is { } c ? Math.Sqrt(((c.VarX + addedNoise) * (c.VarP + addedNoise) + c.CovXP * c.CovXP) / nu) : nan;
        // No z-score for a value that is not finite (dB when the inferred var_min ≤ 0).
        static Estimate E(double value, double low, double high, double model, double sd) =>
            new(value, low, high, model, double.IsFinite(value) ? (value - model) / sd : double.NaN);
        double db = Db(inferred.VarMin);
        // dB falls as var_min rises, so var_min's upper end gives dB's lower end; the delta method gives its spread.
        double dbSd = 10 / Math.Log(10) * minSd / Math.Abs(inferred.VarMin);
        return new ReadoutEstimate(n, mi, mq, si, sq, siq, addedNoise,
            E(si - addedNoise, iLow - addedNoise, iHigh - addedNoise, p?.VarX ?? nan, sdI),
            E(sq - addedNoise, qLow - addedNoise, qHigh - addedNoise, p?.VarP ?? nan, sdQ),
            E(siq, covLow, covHigh, p?.CovXP ?? nan, sdC),
            E(inferred.VarMin, minLow, minHigh, p?.VarMin ?? nan, minSd),
            E(inferred.VarMax, maxLow, maxHigh, p?.VarMax ?? nan, maxSd),
            E(inferred.Occupancy, occLow, occHigh, p?.Occupancy ?? nan, occSd),
            E(db, Db(minHigh), Db(minLow), p?.SqueezingDb ?? nan, dbSd),
            E(inferred.VarMin * inferred.VarMax, detLow, detHigh, p is { } d ? d.VarMin * d.VarMax : nan, detSd));
    }

    /// <summary>
    /// The warning for an estimate whose var_min·var_max lies below ¼ beyond its interval (see
    /// <see cref="ReadoutEstimate.ViolatesUncertainty"/>), naming the delay and the product with its interval; null otherwise.
    /// </summary>
    public static string? UncertaintyWarning(ReadoutEstimate e, double delayS, double confidence)
    {
        if (!e.ViolatesUncertainty) return null;
        var u = e.UncertaintyProduct;
        return $"delay {Quantity.Format(delayS, Dimension.Time)}: the estimated var_min·var_max = {u.Value:G3} ({confidence:P0} interval {u.Low:G3} to {u.High:G3}) " +
            $"is below ¼, which no physical state allows (det V ≥ ¼ with zero-point variance ½): the added noise subtracted ({e.AddedNoise:G4} quanta) " +
            "is larger than the readout adds, or the gain calibration is off";
    }

    private static ModeMoments Moments(double varX, double varP, double cov, double meanX, double meanP) =>
        ModeMoments.From(varX, varP, cov, meanX, meanP);

    /// <summary>Squeezing against zero-point; +∞ when var_min ≤ 0 (an interval end), NaN is never returned for finite input.</summary>
    private static double Db(double varMin) => Physics.SqueezingDb(varMin);

    private static (double L00, double L10, double L11) Cholesky2(double a, double b, double c)
    {
        double l00 = Math.Sqrt(Math.Max(a, 0));
        double l10 = l00 > 0 ? b / l00 : 0;
        double l11 = Math.Sqrt(Math.Max(c - l10 * l10, 0));
        return (l00, l10, l11);
    }

    /// <summary>Linear-interpolation quantile of sorted data (Hyndman and Fan type 7).</summary>
    private static double Quantile(double[] sorted, double p)
    {
        double h = (sorted.Length - 1) * p;
        int lo = (int)Math.Floor(h);
        int hi = Math.Min(lo + 1, sorted.Length - 1);
        return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
    }

    private static double StandardDeviation(double[] values)
    {
        double mean = values.Average();
        double s = 0;
        foreach (double v in values) s += (v - mean) * (v - mean);
        return Math.Sqrt(s / (values.Length - 1));
    }
}

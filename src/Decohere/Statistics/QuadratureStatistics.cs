namespace Decohere.Statistics;

/// <summary>
/// Sufficient statistics of N pairs (i, q): count, means and centred sums of squares and products. Blocks are reduced
/// with the two-pass formula and merged with the pairwise update of T. F. Chan, G. H. Golub, R. J. LeVeque,
/// "Updating formulae and a pairwise algorithm for computing sample variances", COMPSTAT 1982 — stable for any mean,
/// and deterministic when merged in a fixed order.
/// </summary>
public readonly record struct QuadratureStatistics(long Count, double MeanI, double MeanQ, double SumII, double SumQQ, double SumIQ)
{
    /// <summary>No samples.</summary>
    public static QuadratureStatistics Empty => default;

    /// <summary>Unbiased sample variance of i.</summary>
    public double VarianceI => SumII / (Count - 1);

    /// <summary>Unbiased sample variance of q.</summary>
    public double VarianceQ => SumQQ / (Count - 1);

    /// <summary>Unbiased sample covariance of i and q.</summary>
    public double CovarianceIQ => SumIQ / (Count - 1);

    /// <summary>Statistics of one block of samples (two passes: mean, then centred sums).</summary>
    public static QuadratureStatistics Of(ReadOnlySpan<double> i, ReadOnlySpan<double> q)
    {
        int n = i.Length;
        if (n == 0) return Empty;
        double si = 0, sq = 0;
        for (int k = 0; k < n; k++) { si += i[k]; sq += q[k]; }
        double mi = si / n, mq = sq / n;
        double ii = 0, qq = 0, iq = 0;
        for (int k = 0; k < n; k++)
        {
            double di = i[k] - mi, dq = q[k] - mq;
            ii += di * di;
            qq += dq * dq;
            iq += di * dq;
        }
        return new QuadratureStatistics(n, mi, mq, ii, qq, iq);
    }

    /// <summary>The statistics of the union of two sets of samples (Chan, Golub, LeVeque 1982, eq. 2.1).</summary>
    public QuadratureStatistics Merge(QuadratureStatistics other)
    {
        if (other.Count == 0) return this;
        if (Count == 0) return other;
        long n = Count + other.Count;
        double di = other.MeanI - MeanI, dq = other.MeanQ - MeanQ;
        double w = (double)Count * other.Count / n;
        return new QuadratureStatistics(n,
            MeanI + di * other.Count / n, MeanQ + dq * other.Count / n,
            SumII + other.SumII + di * di * w, SumQQ + other.SumQQ + dq * dq * w, SumIQ + other.SumIQ + di * dq * w);
    }
}

namespace Decohere.Tests.Sampling;

/// <summary>Monte Carlo agreement checks: an estimate against an exact value within k standard errors.</summary>
internal static class MonteCarloAssert
{
    /// <summary>Asserts |estimate − exact| ≤ sigmas·σ, naming the quantity in the failure.</summary>
    public static void Within(double exact, double estimate, double standardError, double sigmas, string what)
    {
        Assert.True(double.IsFinite(estimate), $"{what}: estimate {estimate} is not finite");
        double z = (estimate - exact) / standardError;
        Assert.True(Math.Abs(z) <= sigmas, $"{what}: estimate {estimate:G6}, exact {exact:G6}, σ {standardError:G3}, z = {z:F2} (allowed ±{sigmas}σ)");
    }

    /// <summary>Sample mean and unbiased covariance of the columns of data[row][column].</summary>
    public static (double[] Mean, double[,] Covariance) Moments(IReadOnlyList<double[]> rows)
    {
        int n = rows.Count, d = rows[0].Length;
        var mean = new double[d];
        foreach (var r in rows) for (int a = 0; a < d; a++) mean[a] += r[a] / n;
        var cov = new double[d, d];
        foreach (var r in rows)
            for (int a = 0; a < d; a++)
                for (int b = 0; b < d; b++) cov[a, b] += (r[a] - mean[a]) * (r[b] - mean[b]) / (n - 1);
        return (mean, cov);
    }
}

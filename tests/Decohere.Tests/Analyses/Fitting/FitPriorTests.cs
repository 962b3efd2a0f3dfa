using Decohere.Analyses.Fitting;
using Decohere.Core;

namespace Decohere.Tests.Analyses.Fitting;

public class FitPriorTests
{
    private static readonly double[] Delays = [0, 0.005, 0.01, 0.02, 0.03, 0.04];

    /// <summary>
    /// A Gaussian prior combines with the data's likelihood by precision weighting when both are close to Gaussian:
    /// x̂ = (x_d/s² + μ/σ²)/(1/s² + 1/σ²), se = (1/s² + 1/σ²)^{−1/2} (the normal–normal conjugate update; A. Gelman et al.,
    /// Bayesian Data Analysis, 3rd ed., CRC 2013, sec. 2.5). The likelihood here is χ² (Wishart) variances of 4000 shots, close
    /// to Gaussian; we allow 10% of the posterior standard error for its skew.
    /// </summary>
    [Fact]
    public void GaussianPriorIsPrecisionWeighted()
    {
        var truth = SyntheticData.SingleMode(50, 10, 1.3, 0.05);
        var data = SyntheticData.Variances(truth, Delays, 4000, seed: 5);
        var settings = new FitSettings { Free = ["modes.drum.bath.occupancy"], Profiles = false, Parallel = false };
        var plain = FitAnalysis.Solve(truth, settings, data).Parameters[0];
        double mu = plain.Value + 3 * plain.StandardError, sigma = plain.StandardError;
        var withPrior = FitAnalysis.Solve(truth, settings with { Priors = [FitPrior.Parse($"modes.drum.bath.occupancy={mu:R}±{sigma:R}", truth)] }, data).Parameters[0];
        double w = 1 / (plain.StandardError * plain.StandardError), wp = 1 / (sigma * sigma);
        double expected = (plain.Value * w + mu * wp) / (w + wp), se = 1 / Math.Sqrt(w + wp);
        Assert.Equal(expected, withPrior.Value, 0.1 * se);
        Assert.Equal(se, withPrior.StandardError, 0.1 * se);
    }

    /// <summary>A bound that excludes the data's optimum puts the estimate on the bound (the posterior is truncated there).</summary>
    [Fact]
    public void BoundedPriorTruncates()
    {
        var truth = SyntheticData.SingleMode(50, 10, 1.3, 0.05);
        var data = SyntheticData.Variances(truth, Delays, 4000, seed: 6);
        var settings = new FitSettings { Free = ["modes.drum.bath.occupancy"], Profiles = false, Parallel = false, Priors = [FitPrior.Parse("modes.drum.bath.occupancy=30..45", truth)] };
        var fit = FitAnalysis.Solve(truth, settings, data).Parameters[0];
        Assert.InRange(fit.Value, 44.9, 45);
    }

    [Theory]
    [InlineData("modes.drum.bath.occupancy=50", "prior:")]
    [InlineData("modes.drum.bath.occupancy=50±0", "standard deviation")]
    [InlineData("modes.drum.bath.occupancy=60..40", "lower bound")]
    [InlineData("modes.drum.bath.ocupancy=50±5", "is not a parameter")]
    public void MalformedPriorsAreNamed(string text, string message)
    {
        var e = Assert.Throws<InputException>(() => FitPrior.Parse(text, SyntheticData.SingleMode(50, 10, 1.3, 0.05)));
        Assert.Contains(message, e.Message);
    }
}

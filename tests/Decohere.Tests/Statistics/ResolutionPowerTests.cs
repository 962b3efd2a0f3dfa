using MathNet.Numerics.Distributions;
using MathNet.Numerics.Integration;
using MathNet.Numerics.Random;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

public class ResolutionPowerTests
{
    [Theory]
    [InlineData(0.0, 20)]
    [InlineData(0.0, 100)]
    [InlineData(0.5, 100)]
    [InlineData(0.5, 500)]
    [InlineData(1.3, 500)]
    [InlineData(1.3, 2000)]
    public void ClosedFormPower_AgreesWithGaussianShotMonteCarlo(double addedNoise, int shots)
    {
        // Independent check: draw N Gaussian shots of variance V + n_add with MathNet's Normal, form the unbiased sample
        // variance (sample mean removed), and apply the criterion as a lab would: upper bound ν s²/χ²_{1−c}(ν) − n_add < ½
        // (NIST/SEMATECH e-Handbook sec. 7.2.3). The fraction resolved must match the closed form within 4σ of its
        // binomial error √(p(1−p)/M).
        const double v = 0.32, threshold = 0.5, confidence = 0.95;
        const int trials = 1500;
        double closed = ResolutionPower.ClosedForm(v, addedNoise, shots, threshold, confidence);
        var rng = new Xoshiro256StarStar(1000 + shots + (int)(addedNoise * 10));
        var normal = new Normal(0, Math.Sqrt(v + addedNoise), rng);
        var x = new double[shots];
        int resolved = 0;
        for (int t = 0; t < trials; t++)
        {
            normal.Samples(x);
            double mean = x.Average();
            double s2 = x.Sum(a => (a - mean) * (a - mean)) / (shots - 1);
            if (VarianceStatistics.UpperBound(s2, shots, confidence) - addedNoise < threshold) resolved++;
        }
        double mc = (double)resolved / trials;
        double sigma = Math.Sqrt(Math.Max(closed * (1 - closed), 1.0 / trials) / trials);
        Assert.InRange(closed, 0.05, 0.999);
        Assert.True(Math.Abs(mc - closed) <= 4 * sigma, $"closed {closed:F4}, Monte Carlo {mc:F4} ± {sigma:F4}");
    }

    [Theory]
    [InlineData(0.0, 0.8, 300)]
    [InlineData(0.15, 0.8, 300)]
    [InlineData(0.3, 1.3, 2000)]
    public void MonteCarloPower_AgreesWithQuadratureOverTheCalibrationError(double calibrationSigma, double addedNoise, long shots)
    {
        // Reference: P = ∫ φ(ε) F_{χ²_ν}((thr + n + ε)·χ²_{1−c}(ν)/(V + n)) dε, the closed-form χ² power averaged over a Gaussian
        // calibration error by Gauss–Legendre quadrature (MathNet) — independent of the sampler. σ = 0 reduces to the closed form.
        // Allowed: 4σ of the binomial Monte Carlo error.
        const double v = 0.3, threshold = 0.5, confidence = 0.95;
        double nu = shots - 1, q = ChiSquared.InvCDF(nu, 1 - confidence);
        double Conditional(double eps) => ChiSquared.CDF(nu, Math.Max(0, (threshold + addedNoise + eps) * q / (v + addedNoise)));
        double reference = calibrationSigma == 0
            ? Conditional(0)
            : GaussLegendreRule.Integrate(e => Normal.PDF(0, calibrationSigma, e) * Conditional(e), -8 * calibrationSigma, 8 * calibrationSigma, 128);
        var (power, err) = ResolutionPower.MonteCarlo(v, addedNoise, shots, threshold, confidence, calibrationSigma, 20000, ResolutionPower.PointRandom(7, 3));
        Assert.True(Math.Abs(power - reference) <= 4 * Math.Max(err, 1e-3), $"reference {reference:F4}, Monte Carlo {power:F4} ± {err:F4}");
    }

    [Fact]
    public void LargestAddedNoise_AndFewestShots_SitOnTheTargetPower()
    {
        // Definitions (common practice for a power analysis): the largest added noise solves power(n) = target; the fewest
        // shots is the smallest integer N with power(N) ≥ target, so N − 1 falls short.
        const double v = 0.3, threshold = 0.5, confidence = 0.95, target = 0.9;
        double n = ResolutionPower.LargestAddedNoise(v, 2000, threshold, confidence, target)!.Value;
        Assert.Equal(target, ResolutionPower.ClosedForm(v, n, 2000, threshold, confidence), 1e-7);
        Assert.True(ResolutionPower.ClosedForm(v, n * 1.01, 2000, threshold, confidence) < target);
        long shots = ResolutionPower.FewestShots(v, 1.3, threshold, confidence, target)!.Value;
        Assert.True(ResolutionPower.ClosedForm(v, 1.3, shots, threshold, confidence) >= target);
        Assert.True(ResolutionPower.ClosedForm(v, 1.3, shots - 1, threshold, confidence) < target);
        // A variance above the threshold can never be resolved (power ≤ 1 − c): no shot count helps.
        Assert.Null(ResolutionPower.FewestShots(0.6, 0.1, threshold, confidence, target));
        // Too few shots: not even a noiseless readout reaches the target.
        Assert.Null(ResolutionPower.LargestAddedNoise(v, 5, threshold, confidence, target));
    }

    [Fact]
    public void PointRandom_IsReproducibleAndDiffersBetweenPoints()
    {
        // Seeding per point (master seed + index) makes each point reproducible whatever the order (house style).
        Assert.Equal(ResolutionPower.PointRandom(42, 5).NextDouble(), ResolutionPower.PointRandom(42, 5).NextDouble());
        Assert.NotEqual(ResolutionPower.PointRandom(42, 5).NextDouble(), ResolutionPower.PointRandom(42, 6).NextDouble());
    }
}

using MathNet.Numerics.Distributions;
using Decohere.Engine;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

public class ChiSquareLawTests
{
    [Theory]
    // NIST/SEMATECH e-Handbook of Statistical Methods, table 1.3.6.7.4 (critical values of the chi-square distribution),
    // values recalled from the table and kept where MathNet agrees to the table's 3 decimals.
    [InlineData(1, 0.95, 3.841)]
    [InlineData(5, 0.05, 1.145)]
    [InlineData(5, 0.95, 11.070)]
    [InlineData(10, 0.95, 18.307)]
    [InlineData(10, 0.05, 3.940)]
    [InlineData(20, 0.05, 10.851)]
    [InlineData(20, 0.95, 31.410)]
    [InlineData(100, 0.95, 124.342)]
    [InlineData(100, 0.05, 77.929)]
    public void QuantilesMatchTheNistTable(int nu, double lowerTail, double table)
    {
        // The table gives three decimals: agreement to half a unit of the last one.
        Assert.Equal(table, VarianceStatistics.ChiSquareQuantile(lowerTail, nu), 5e-4);
    }

    [Fact]
    public async Task SampleVariancesOfShotsFollowTheChiSquareLaw()
    {
        // (N − 1)s²/σ² ~ χ²_{N−1} for Gaussian shots (NIST/SEMATECH e-Handbook, sec. 1.3.6.6.6), tested by
        // Kolmogorov–Smirnov against MathNet's ChiSquared CDF. Critical value at α = 0.001: √(−ln(α/2)/2)/√M = 1.949/√M
        // (asymptotic Kolmogorov distribution; common practice).
        var scenario = Tests.Sampling.SamplingScenarios.Squeezed(11);
        var dynamics = Dynamics.Solve(scenario);
        const int repetitions = 2000;
        var variances = new double[repetitions];
        double sigma2 = 0;
        for (int r = 0; r < repetitions; r++)
        {
            var sampler = new ShotSampler(scenario with { Seed = 1000 + r }, dynamics);
            sigma2 = sampler.Delays[1].Model.VarX + scenario.Readout!.AddedNoise!.Value;
            var stats = await sampler.RunAsync();
            variances[r] = stats[1].VarianceI;
        }
        double Distance(double s2)
        {
            var u = variances.Select(v => ChiSquared.CDF(10, 10 * v / s2)).Order().ToArray();
            double d = 0;
            for (int k = 0; k < repetitions; k++) d = Math.Max(d, Math.Max((k + 1.0) / repetitions - u[k], u[k] - (double)k / repetitions));
            return d;
        }
        double critical = 1.949 / Math.Sqrt(repetitions);
        Assert.True(Distance(sigma2) < critical, $"KS distance {Distance(sigma2):F4} exceeds the α = 0.001 critical value {critical:F4}");
        // The same test rejects a wrong law: with σ² 15% too large the distance is beyond the critical value.
        Assert.True(Distance(1.15 * sigma2) > critical, $"KS did not reject a 15% error in σ² (distance {Distance(1.15 * sigma2):F4})");
    }

    [Fact]
    public void IntervalsCoverTheTrueValueNinetyFivePercentOfTheTime()
    {
        // Coverage of 95% intervals over 2,000 repetitions must be 95% ± 2% (binomial σ = 0.49%, so ±4σ).
        // var_x: exact χ² interval (NIST/SEMATECH e-Handbook, sec. 7.2.3); var_min and squeezing_db: parametric bootstrap.
        var scenario = Tests.Sampling.SamplingScenarios.Squeezed(800);
        var sampler = new ShotSampler(scenario);
        var delay = sampler.Delays[1];
        const int repetitions = 2000;
        int coverX = 0, coverMin = 0, coverDb = 0, coverOcc = 0;
        for (int r = 0; r < repetitions; r++)
        {
            var s = new ShotSampler(scenario with { Seed = 50_000 + r }, sampler.Dynamics).SampleStatistics(1, 800);
            var e = ReadoutEstimator.Estimate(s, scenario.Readout!.AddedNoise!.Value, delay.Model, (ulong)r, resamples: 400);
            if (e.VarX.Covers) coverX++;
            if (e.VarMin.Covers) coverMin++;
            if (e.SqueezingDb.Covers) coverDb++;
            if (e.Occupancy.Covers) coverOcc++;
        }
        foreach (var (name, count) in new[] { ("var_x", coverX), ("var_min", coverMin), ("squeezing_db", coverDb), ("occupancy", coverOcc) })
        {
            double rate = (double)count / repetitions;
            Assert.True(Math.Abs(rate - 0.95) <= 0.02, $"{name}: coverage {rate:P1}, expected 95% ± 2%");
        }
    }
}

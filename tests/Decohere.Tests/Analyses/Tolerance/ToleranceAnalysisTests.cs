using Decohere.Analyses.Tolerance;
using Decohere.Core;
using Decohere.Statistics;
using Decohere.Tests.Analyses.Lifetime;

namespace Decohere.Tests.Analyses.Tolerance;

public class ToleranceAnalysisTests
{
    [Fact]
    public void Power_AtADelay_UsesTheDampedModeVariance()
    {
        // Source: the single-mode law V(τ) = e^{−γτ}V(0) + (1 − e^{−γτ})(n_th + ½) (PHYSICS.md) gives the variance at the delay;
        // the power at each grid point must be the χ² power of that variance (NIST/SEMATECH e-Handbook sec. 7.2.3).
        var scenario = LifetimeAnalysisTests.Damped(addedNoise: 0.5);
        var settings = new ToleranceSettings { AddedNoise = [0, 0.5, 1.5], Shots = [100, 1000], DelayS = 4e-4 };
        var result = ToleranceAnalysis.Solve(scenario, settings);
        double gamma = 2 * Math.PI * 2, v0 = 0.5 * Math.Pow(10, -0.6), decay = Math.Exp(-gamma * 4e-4);
        double v = decay * v0 + (1 - decay) * 30.5;
        Assert.Equal(v, result.VarMin, 1e-12);
        Assert.Equal(6, result.Points.Length);
        foreach (var p in result.Points)
        {
            Assert.Equal(ResolutionPower.ClosedForm(v, p.AddedNoise, p.Shots, 0.5, 0.95), p.Power, 1e-9);
            Assert.Null(p.PowerMc);
            Assert.Null(p.PowerMcErr);
        }
        // Grid order: added noise outer, shots inner.
        Assert.Equal([(0.0, 100L), (0.0, 1000L), (0.5, 100L)], result.Points.Take(3).Select(p => (p.AddedNoise, p.Shots)));
    }

    [Fact]
    public void MonteCarlo_RunsOnlyWithCalibrationUncertainty_AndReproduces()
    {
        // With σ_cal = 0 the Monte Carlo samples the same statistic as the closed form, so it must agree within 4σ of its
        // binomial error (NIST/SEMATECH e-Handbook sec. 7.2.3); the same seed gives the same numbers (seeded per point).
        var scenario = LifetimeAnalysisTests.Damped(addedNoise: 0.5);
        var settings = new ToleranceSettings { AddedNoise = [0.2, 1.0], Shots = [200, 800], DelayS = 2e-4, CalibrationUncertainty = 0, Draws = 4000 };
        var a = ToleranceAnalysis.Solve(scenario, settings);
        var b = ToleranceAnalysis.Solve(scenario, settings);
        foreach (var (p, q) in a.Points.Zip(b.Points))
        {
            Assert.Equal(p.PowerMc, q.PowerMc);
            double sigma = Math.Sqrt(Math.Max(p.Power * (1 - p.Power), 1.0 / 4000) / 4000);
            Assert.True(Math.Abs(p.PowerMc!.Value - p.Power) <= 4 * sigma, $"{p}: closed {p.Power}, mc {p.PowerMc}");
        }
    }

    [Fact]
    public void BadGrid_NamesTheSetting()
    {
        var scenario = LifetimeAnalysisTests.Damped(addedNoise: 0.5);
        Assert.Contains("shots:", Assert.Throws<InputException>(() =>
            ToleranceAnalysis.Solve(scenario, new ToleranceSettings { AddedNoise = [1], Shots = [1] })).Message);
        Assert.Contains("target power:", Assert.Throws<InputException>(() =>
            ToleranceAnalysis.Solve(scenario, new ToleranceSettings { AddedNoise = [1], Shots = [10], TargetPower = 1.5 })).Message);
    }
}

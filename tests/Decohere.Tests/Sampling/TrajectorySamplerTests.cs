using Decohere.Engine;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Sampling;

public class TrajectorySamplerTests
{
    private static async Task<double[]> Sample(TrajectorySampler sampler, int count)
    {
        int per = sampler.Times.Length * sampler.Components.Length;
        var values = new double[(long)count * per];
        await sampler.RunAsync(count, (b, _) =>
        {
            Array.Copy(b.Values, 0, values, b.FirstTrajectory * per, (long)b.Count * per);
            return ValueTask.CompletedTask;
        });
        return values;
    }

    /// <summary>Sample moments over trajectories at time index k: every component's mean and the covariance matrix.</summary>
    private static (double[] Mean, double[,] Cov) At(double[] values, TrajectorySampler sampler, int count, int k)
    {
        int c = sampler.Components.Length, per = sampler.Times.Length * c;
        var rows = Enumerable.Range(0, count).Select(t => values.AsSpan(t * per + k * c, c).ToArray()).ToList();
        return MonteCarloAssert.Moments(rows);
    }

    [Fact]
    public async Task FullDemoTrajectoriesAgreeWithTheCovarianceEngineWithinFiveSigma()
    {
        // Reference: the covariance engine (Lyapunov differential equation) at the same times, for the 4-dimensional
        // cavity-plus-drum demo through all three stages. Standard errors as for Gaussian samples (Anderson 2003, sec. 7.3); 5σ.
        var scenario = ScenarioLoader.Demo();
        var dynamics = Dynamics.Solve(scenario);
        var sampler = new TrajectorySampler(dynamics, [0, 1, 2, 3], outputStepS: 250e-6);
        const int n = 3000;
        var values = await Sample(sampler, n);
        foreach (double t in new[] { 0.0, 0.5e-3, 2e-3, 3e-3, 5e-3, 11e-3 })
        {
            int k = sampler.Times.Select((x, i) => (x, i)).MinBy(p => Math.Abs(p.x - t)).i;
            Assert.True(Math.Abs(sampler.Times[k] - t) < 1e-12, $"grid has no time {t}");
            var state = dynamics.StateAt(t);
            var (mean, cov) = At(values, sampler, n, k);
            for (int a = 0; a < 4; a++)
            {
                MonteCarloAssert.Within(state.Mean[a], mean[a], Math.Sqrt(state.Covariance[a, a] / n), 5, $"t={t} mean[{a}]");
                for (int b = a; b < 4; b++)
                {
                    double vab = state.Covariance[a, b];
                    double se = Math.Sqrt((state.Covariance[a, a] * state.Covariance[b, b] + vab * vab) / (n - 1));
                    MonteCarloAssert.Within(vab, cov[a, b], se, 5, $"t={t} V[{a},{b}]");
                }
            }
        }
    }

    [Fact]
    public async Task ThermalTrajectoriesFollowTheClosedFormRelaxation()
    {
        // Closed form (PHYSICS.md "Thermal decoherence"): V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½). 5σ.
        var scenario = SamplingScenarios.Thermal();
        var sampler = new TrajectorySampler(Dynamics.Solve(scenario), [0, 1]);
        const int n = 4000;
        var values = await Sample(sampler, n);
        double gamma = 2 * Math.PI * 40;
        for (int k = 0; k < sampler.Times.Length; k += 20)
        {
            double t = sampler.Times[k], v = Math.Exp(-gamma * t) * 9.5 + (1 - Math.Exp(-gamma * t)) * 3.5;
            var (_, cov) = At(values, sampler, n, k);
            MonteCarloAssert.Within(v, cov[0, 0], v * Math.Sqrt(2.0 / (n - 1)), 5, $"t={t} var x");
            MonteCarloAssert.Within(v, cov[1, 1], v * Math.Sqrt(2.0 / (n - 1)), 5, $"t={t} var p");
        }
    }

    [Fact]
    public async Task TrajectoriesAreIdenticalForOneAndTwoThreads()
    {
        // Common practice for reproducible parallel Monte Carlo: seed streams per block make the numbers independent of the thread count.
        var scenario = SamplingScenarios.TwoModes();
        var dynamics = Dynamics.Solve(scenario);
        var one = await Sample(new TrajectorySampler(dynamics, [0, 1, 2, 3], new SamplerSettings(MaxDegreeOfParallelism: 1, BatchShots: 5000)), 100);
        var two = await Sample(new TrajectorySampler(dynamics, [0, 1, 2, 3], new SamplerSettings(MaxDegreeOfParallelism: 2, BatchShots: 5000)), 100);
        Assert.Equal(one, two);
        Assert.Contains(one, v => v != 0);
    }
}

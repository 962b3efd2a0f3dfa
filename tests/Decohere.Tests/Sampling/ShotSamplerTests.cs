using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Sampling;

public class ShotSamplerTests
{
    private static async Task<List<(int Delay, double X, double P, double I, double Q)>> Collect(ShotSampler sampler)
    {
        var rows = new List<(int, double, double, double, double)>();
        await sampler.RunAsync((b, _) =>
        {
            for (int k = 0; k < b.Count; k++) rows.Add((b.Delay, b.X[k], b.P[k], b.I[k], b.Q[k]));
            return ValueTask.CompletedTask;
        });
        return rows;
    }

    public static TheoryData<string> Scenarios => ["thermal", "squeezed", "two-modes"];

    private static Scenario Named(string name) => name switch
    {
        "thermal" => SamplingScenarios.Thermal(),
        "squeezed" => SamplingScenarios.Squeezed(),
        _ => SamplingScenarios.TwoModes(),
    };

    [Theory]
    [MemberData(nameof(Scenarios))]
    public async Task ShotMomentsAgreeWithTheLyapunovStateWithinFiveSigma(string name)
    {
        // Reference: the covariance engine's exact state (Lyapunov differential equation, PHYSICS.md "Dynamics").
        // Sampling errors of a Gaussian sample: se(mean) = √(V/N), se(s²) = V√(2/(N−1)), se(s_xp) = √((V_xx V_pp + V_xp²)/(N−1))
        // (T. W. Anderson, An Introduction to Multivariate Statistical Analysis, 3rd ed., 2003, sec. 7.3). Allowed: 5σ.
        var scenario = Named(name);
        var sampler = new ShotSampler(scenario);
        var rows = await Collect(sampler);
        double n = sampler.ShotsPerDelay, noise = scenario.Readout!.AddedNoise!.Value;
        foreach (var delay in sampler.Delays)
        {
            var shots = rows.Where(r => r.Delay == delay.Index).ToList();
            Assert.Equal((int)n, shots.Count);
            var m = delay.Model;
            var (mean, cov) = MonteCarloAssert.Moments(shots.Select(s => new[] { s.X, s.P, s.I, s.Q }).ToList());
            string at = $"{name} delay {delay.DelayS}";
            MonteCarloAssert.Within(m.MeanX, mean[0], Math.Sqrt(m.VarX / n), 5, at + " mean x");
            MonteCarloAssert.Within(m.MeanP, mean[1], Math.Sqrt(m.VarP / n), 5, at + " mean p");
            MonteCarloAssert.Within(m.VarX, cov[0, 0], m.VarX * Math.Sqrt(2 / (n - 1)), 5, at + " var x");
            MonteCarloAssert.Within(m.VarP, cov[1, 1], m.VarP * Math.Sqrt(2 / (n - 1)), 5, at + " var p");
            MonteCarloAssert.Within(m.CovXP, cov[0, 1], Math.Sqrt((m.VarX * m.VarP + m.CovXP * m.CovXP) / (n - 1)), 5, at + " cov xp");
            // The readout adds independent noise of variance n_add to each quadrature (PHYSICS.md "Readout").
            MonteCarloAssert.Within(m.VarX + noise, cov[2, 2], (m.VarX + noise) * Math.Sqrt(2 / (n - 1)), 5, at + " var i");
            MonteCarloAssert.Within(m.VarP + noise, cov[3, 3], (m.VarP + noise) * Math.Sqrt(2 / (n - 1)), 5, at + " var q");
            MonteCarloAssert.Within(m.CovXP, cov[2, 3], Math.Sqrt(((m.VarX + noise) * (m.VarP + noise) + m.CovXP * m.CovXP) / (n - 1)), 5, at + " cov iq");
        }
    }

    [Fact]
    public void ThermalPredictionIsTheClosedFormRelaxation()
    {
        // Closed form (PHYSICS.md "Thermal decoherence"): V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½); guards the delays' times.
        var sampler = new ShotSampler(SamplingScenarios.Thermal());
        double gamma = 2 * Math.PI * 40;
        foreach (var d in sampler.Delays)
        {
            double expected = Math.Exp(-gamma * d.DelayS) * 9.5 + (1 - Math.Exp(-gamma * d.DelayS)) * 3.5;
            Assert.Equal(expected, d.Model.VarX, 1e-9 * expected);
        }
    }

    [Fact]
    public async Task StatisticsReturnedEqualThoseOfTheShotsHandedOut()
    {
        // Reference: MathNet.Numerics' Statistics.Variance/Covariance over the same shots (an independent implementation).
        var sampler = new ShotSampler(SamplingScenarios.Squeezed(9000), settings: new SamplerSettings(BatchShots: 4096 * 2));
        var rows = new List<(int, double, double)>();
        var stats = await sampler.RunAsync((b, _) =>
        {
            for (int k = 0; k < b.Count; k++) rows.Add((b.Delay, b.I[k], b.Q[k]));
            return ValueTask.CompletedTask;
        });
        for (int d = 0; d < sampler.Delays.Length; d++)
        {
            var i = rows.Where(r => r.Item1 == d).Select(r => r.Item2).ToArray();
            var q = rows.Where(r => r.Item1 == d).Select(r => r.Item3).ToArray();
            Assert.Equal(9000, stats[d].Count);
            Assert.Equal(MathNet.Numerics.Statistics.Statistics.Mean(i), stats[d].MeanI, 1e-12);
            Assert.Equal(MathNet.Numerics.Statistics.Statistics.Variance(i), stats[d].VarianceI, 1e-11);
            Assert.Equal(MathNet.Numerics.Statistics.Statistics.Variance(q), stats[d].VarianceQ, 1e-11);
            Assert.Equal(MathNet.Numerics.Statistics.Statistics.Covariance(i, q), stats[d].CovarianceIQ, 1e-11);
        }
    }

    [Fact]
    public async Task OneAndTwoThreadsWriteIdenticalFiles()
    {
        // Common practice for reproducible parallel Monte Carlo: streams per block, never per thread; bytes must match.
        var scenario = SamplingScenarios.TwoModes(30000);
        var dir = Directory.CreateTempSubdirectory("decohere-threads-");
        try
        {
            async Task<byte[]> Write(int threads)
            {
                var sampler = new ShotSampler(scenario, settings: new SamplerSettings(MaxDegreeOfParallelism: threads, BatchShots: 4096 * 3));
                string path = Path.Combine(dir.FullName, $"shots-{threads}.parquet");
                await using (var table = await ShotsTable.CreateAsync(path, sampler, Provenance.For(scenario)))
                {
                    await sampler.RunAsync(table.WriteAsync);
                    await table.CommitAsync();
                }
                return await File.ReadAllBytesAsync(path);
            }
            var one = await Write(1);
            var two = await Write(2);
            Assert.True(one.AsSpan().SequenceEqual(two), "shots.parquet differs between 1 and 2 threads");
            // A different seed must change the shots (the check above could otherwise pass trivially).
            var other = new ShotSampler(scenario with { Seed = scenario.Seed + 1 });
            var a = await Collect(new ShotSampler(scenario));
            var b = await Collect(other);
            Assert.NotEqual(a[0].X, b[0].X);
        }
        finally { dir.Delete(recursive: true); }
    }

    [Fact]
    public void FoldedNoiseStatisticsAgreeWithTheModel()
    {
        // The fast path draws (i, q) from V + n_add·I directly (PHYSICS.md "Readout"); 5σ against the model.
        var sampler = new ShotSampler(SamplingScenarios.Squeezed());
        const long n = 200_000;
        var s = sampler.SampleStatistics(1, n);
        var m = sampler.Delays[1].Model;
        double noise = 0.5;
        MonteCarloAssert.Within(m.VarX + noise, s.VarianceI, (m.VarX + noise) * Math.Sqrt(2.0 / (n - 1)), 5, "folded var i");
        MonteCarloAssert.Within(m.VarP + noise, s.VarianceQ, (m.VarP + noise) * Math.Sqrt(2.0 / (n - 1)), 5, "folded var q");
        MonteCarloAssert.Within(m.CovXP, s.CovarianceIQ, Math.Sqrt(((m.VarX + noise) * (m.VarP + noise) + m.CovXP * m.CovXP) / (n - 1)), 5, "folded cov iq");
    }

    [Fact]
    public async Task FrequencyJitterDephasesTheSqueezedEllipseAsTheGaussianAverageOfRotations()
    {
        // Closed form (common practice, dephasing by a Gaussian random rotation): a detuning δ ~ N(0, (2πσ)²) turns the
        // ellipse by θ = δt, so for V = R(φ) diag(a, b) R(φ)ᵀ the mixture has var_x = (a+b)/2 + (a−b)/2·cos(2φ)·e^{−2(2πσt)²}.
        // Damping is made negligible (linewidth 1 µHz, cold bath). Allowed: 5σ of the sample variance.
        var scenario = ScenarioLoader.Parse("""
            name: test-jitter
            model: effective
            modes:
              bar: { kind: mechanical, frequency: 2 MHz, linewidth: 1e-6 Hz, bath: { occupancy: 0 } }
            initial:
              bar: { state: squeezed, squeezing_db: 8, angle: 0 }
            stages:
              - { name: hold, duration: 1 ms }
            readout: { mode: bar, added_noise: 0.5, shots: 3000, stage: hold, delays: [0.5 ms] }
            jitter: { frequency: { bar: 300 Hz } }
            output: { step: 100 us }
            seed: 5
            """, "test-jitter");
        var sampler = new ShotSampler(scenario);
        var rows = await Collect(sampler);
        double a = 0.5 * Math.Pow(10, -0.8), b = 0.25 / a, t = 0.5e-3;
        double s = 2 * Math.PI * 300 * t;
        double expected = (a + b) / 2 + (a - b) / 2 * Math.Exp(-2 * s * s);
        var (_, cov) = MonteCarloAssert.Moments(rows.Select(r => new[] { r.X, r.P }).ToList());
        // The mixture is not Gaussian, so the standard error of s² comes from the sample's fourth moment: √((m₄ − s⁴)/N).
        double mean = rows.Average(r => r.X);
        double m4 = rows.Average(r => Math.Pow(r.X - mean, 4));
        MonteCarloAssert.Within(expected, cov[0, 0], Math.Sqrt((m4 - cov[0, 0] * cov[0, 0]) / rows.Count), 5, "dephased var x");
        // Without jitter the same delay keeps the pure squeezed variance (far from the dephased value: the check discriminates).
        Assert.True(Math.Abs(sampler.Delays[0].Model.VarX - a) < 1e-3);
        Assert.True(expected > 3 * a);
    }
}

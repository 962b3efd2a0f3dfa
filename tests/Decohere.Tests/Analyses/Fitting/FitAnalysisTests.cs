using MathNet.Numerics.Distributions;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Fitting;

public class FitAnalysisTests
{
    private const double Nth = 50, LinewidthHz = 10, AddedNoise = 1.3;
    private static readonly double[] Delays = [0, 0.005, 0.01, 0.015, 0.02, 0.025, 0.03, 0.04];
    private static readonly string[] Free3 = ["modes.drum.bath.occupancy", "modes.drum.linewidth", "readout.added_noise"];

    [Fact]
    public void ReadoutModelMatchesTheClosedFormOfASingleDampedMode()
    {
        // V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½) for a single damped mode (damped harmonic oscillator in a thermal bath;
        // C. W. Gardiner, P. Zoller, Quantum Noise, 3rd ed., Springer 2004, ch. 3 — recalled from memory), plus n_add.
        var s = SyntheticData.SingleMode(Nth, LinewidthHz, AddedNoise, 0.05, initialOccupancy: 2);
        var model = new ReadoutModel(s, [ParameterPath.Parse("modes.drum.bath.occupancy", s)]);
        double[] delays = [0.04, 0, 0.013, 0.02, 0.001, 0.013];
        var p = model.Predict([Nth], delays);
        double gamma = 2 * Math.PI * LinewidthHz;
        for (int k = 0; k < delays.Length; k++)
        {
            double e = Math.Exp(-gamma * delays[k]);
            double expected = e * 2.5 + (1 - e) * (Nth + 0.5) + AddedNoise;
            Assert.Equal(expected, p[k].VarI, 1e-9 * expected);
            Assert.Equal(expected, p[k].VarQ, 1e-9 * expected);
            Assert.Equal(0, p[k].CovIQ, 1e-9);
        }
    }

    [Fact]
    public void DataPastTheEndOfTheScenarioAreRefused()
    {
        // The scenario runs 50 ms; a delay of 60 ms has no model of the drives behind it.
        var s = SyntheticData.SingleMode(Nth, LinewidthHz, AddedNoise, 0.05);
        var e = Assert.Throws<InputException>(() => ReadoutModel.Predict(s, [0.01, 0.06]));
        Assert.Contains("past the end of the scenario", e.Message);
        Assert.Equal(2, ReadoutModel.Predict(s, [0.05, 0.01]).Length);
    }

    [Theory]
    [InlineData(11)]
    [InlineData(12)]
    [InlineData(13)]
    public async Task RecoversBathDampingAndAddedNoiseFromShots(int seed)
    {
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, AddedNoise, 0.05);
        var shots = SyntheticData.Shots(truth, Delays, 2000, seed);
        string path = Path.Combine(Path.GetTempPath(), $"decohere-shots-{seed}-{Guid.NewGuid():N}.csv");
        File.WriteAllText(path, SyntheticData.ShotsCsv(shots));
        try
        {
            // Start away from the truth, as a user's scenario would be.
            var start = SyntheticData.SingleMode(20, 4, 0.7, 0.05);
            var data = await FitDataReader.ReadAsync(path, start);
            Assert.Equal(DataShape.Shots, data.Shape);
            var fit = FitAnalysis.Solve(start, new FitSettings { Free = [.. Free3] }, data);
            double[] expected = [Nth, LinewidthHz, AddedNoise];
            for (int k = 0; k < 3; k++)
            {
                var e = fit.Parameters[k];
                // Maximum-likelihood estimates are asymptotically normal: allow 4 standard errors (two-sided 6e-5 per check).
                Assert.True(Math.Abs(e.Value - expected[k]) < 4 * e.StandardError, $"{e.Name} = {e.Value} ± {e.StandardError}, truth {expected[k]}");
                Assert.True(e.Low < e.Value && e.Value < e.High && e.LowReached && e.HighReached, $"{e.Name}: interval {e.Low} – {e.High}");
            }
            var temperature = fit.Derived.Single(d => d.Name == "bath_temperature_k");
            // Bose–Einstein inverse, T = h f / (k_B ln(1 + 1/n)) with exact CODATA h and k_B: the profile interval maps through it.
            double tTrue = global::Decohere.Core.Physics.Temperature(4.1e6, Nth);
            Assert.True(Math.Abs(temperature.Value - tTrue) < 4 * temperature.StandardError);
            Assert.Equal(global::Decohere.Core.Physics.Temperature(4.1e6, fit.Parameters[0].Low), temperature.Low, 1e-9 * temperature.Low);
        }
        finally
        {
            File.Delete(path);
        }
    }

    /// <summary>
    /// Simulation-based calibration: over 200 synthetic variance data sets the 95% profile interval of the bath occupancy
    /// (with the linewidth free too) must contain the truth in 95% ± 3% of them; the binomial σ is √(0.95·0.05/200) = 1.5%,
    /// so ±3% is about ±2σ (common practice for a Monte Carlo coverage check).
    /// </summary>
    [Fact]
    public void ProfileIntervalsOfTheBathOccupancyCoverNinetyFivePercent()
    {
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, AddedNoise, 0.05);
        double[] delays = [0.004, 0.012, 0.024, 0.04];
        int covered = 0, sets = 200;
        var settings = new FitSettings { Starts = 1, Parallel = false, ProfileOnly = ["modes.drum.bath.occupancy"], CurvePoints = 2 };
        var lockObject = new object();
        Parallel.For(0, sets, new ParallelOptions { MaxDegreeOfParallelism = 2 }, seed =>
        {
            var data = SyntheticData.Variances(truth, delays, 500, 1000 + seed, withCovariance: false);
            var fit = FitAnalysis.Solve(truth, settings with { Free = ["modes.drum.bath.occupancy", "modes.drum.linewidth"] }, data);
            var n = fit.Parameters[0];
            if (n.Low <= Nth && Nth <= n.High) lock (lockObject) covered++;
        });
        double rate = covered / (double)sets;
        Assert.InRange(rate, 0.92, 0.98);
    }

    [Fact]
    public void ShortDelaysOnlyReportTheThermalDecoherenceRate()
    {
        // For γt ≪ 1 the heating from the ground state is linear, V ≈ ½ + γ n_th t (thermal decoherence at Γ_th = γ·n_th),
        // so only the product is identified.
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, AddedNoise, 0.05);
        double[] delays = [0, 0.0002, 0.0004, 0.0006, 0.0008, 0.001];
        var data = SyntheticData.Variances(truth, delays, 20000, 7);
        var fit = FitAnalysis.Solve(truth, new FitSettings { CurvePoints = 5, Free = ["modes.drum.bath.occupancy", "modes.drum.linewidth"] }, data);
        var warning = Assert.Single(fit.Warnings, w => w.Contains("not separately identified"));
        Assert.Contains("modes.drum.bath.occupancy", warning);
        Assert.Contains("modes.drum.linewidth", warning);
        Assert.Contains("γ·n_th", warning);
        var combo = Assert.Single(fit.Combinations);
        Assert.Equal("thermal_decoherence_rate_per_s", combo.Name);
        double rate = 2 * Math.PI * LinewidthHz * Nth;
        Assert.True(combo.FittedQuantity.Low < rate && rate < combo.FittedQuantity.High, $"Γ_th interval {combo.FittedQuantity.Low} – {combo.FittedQuantity.High}, truth {rate}");
        // The combination is far better determined than either factor.
        Assert.True(combo.FittedQuantity.StandardError / combo.FittedQuantity.Value < 0.2 * fit.Parameters[0].StandardError / fit.Parameters[0].Value);
    }

    [Fact]
    public void OccupancyDataFitWithGaussianErrors()
    {
        // Occupancies with known Gaussian errors: the deviance is χ² with (points − parameters) degrees of freedom.
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, 0, 0.05);
        var model = new ReadoutModel(truth, []);
        var rng = new Random(5);
        var exact = ReadoutModel.Predict(truth, Delays);
        var obs = Delays.Select((d, k) => new DelayObservation(d, 0, double.NaN, double.NaN, null, 0, 0,
            exact[k].Occupancy + 0.5 * Normal.Sample(rng, 0, 1), 0.5, $"row {k + 1}")).ToArray();
        var data = new FitData(DataShape.Occupancies, [.. obs], "synthetic");
        var fit = FitAnalysis.Solve(truth, new FitSettings { Free = ["modes.drum.bath.occupancy", "modes.drum.linewidth"] }, data);
        Assert.Equal(Delays.Length - 2, fit.Goodness.DegreesOfFreedom);
        Assert.True(Math.Abs(fit.Parameters[0].Value - Nth) < 4 * fit.Parameters[0].StandardError);
        Assert.Throws<InputException>(() => FitAnalysis.Solve(truth, new FitSettings { Free = ["readout.added_noise"] }, data));
        Assert.NotNull(model);
    }
}

using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>The whole chain a lab runs: shots from the sampler, written to shots.parquet, read back and fitted.</summary>
public class SamplerToFitTests
{
    [Fact]
    public async Task BathTemperatureComesBackFromSampledShots()
    {
        // Delays over 8 ms of the release; the linewidth is held at its true value (as after a ring-down measurement of γ),
        // the bath temperature and added noise are fitted. The truth: 15 mK (demo file) and 1.3 quanta.
        const int runs = 10;
        var demo = ScenarioLoader.Demo();
        var estimates = new List<double>();
        int covered = 0;
        double sumSquaredErrors = 0;
        for (int seed = 1; seed <= runs; seed++)
        {
            var scenario = demo with { Readout = demo.Readout! with { Shots = 4000, DelaysS = [0, 2e-3, 4e-3, 6e-3, 8e-3] }, Seed = seed };
            var data = await SyntheticData.SampledShotsAsync(scenario);
            var fit = FitAnalysis.Solve(scenario, new FitSettings { Starts = 1, Free = ["modes.drum.bath.temperature", "readout.added_noise"] }, data);
            var t = fit.Parameters.Single(p => p.Name == "modes.drum.bath.temperature");
            estimates.Add(t.Value);
            sumSquaredErrors += t.StandardError * t.StandardError;
            if (t.Low <= 0.015 && 0.015 <= t.High) covered++;
            Assert.InRange(t.High - t.Low, 1e-4, 0.015);   // honest, not vacuous: a few mK wide
        }
        // 95% intervals: P(fewer than 7 of 10 cover) = 0.001 under the binomial law (common practice).
        Assert.True(covered >= 7, $"{covered} of {runs} intervals contain 15 mK");
        // No bias: the mean of the estimates lies within 4 standard errors of the mean of the truth.
        double mean = estimates.Average(), errorOfMean = Math.Sqrt(sumSquaredErrors) / runs;
        Assert.True(Math.Abs(mean - 0.015) < 4 * errorOfMean, $"mean {mean} ± {errorOfMean}");
    }
}

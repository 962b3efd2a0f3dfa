using Decohere.Analyses.Runs;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Reports;

/// <summary>The (i, q) histograms filled from the streamed shots.</summary>
public class IqHistogramsTests
{
    private sealed class Discard : IRunStream<ShotBatch>
    {
        public long Shots;
        public ValueTask WriteAsync(ShotBatch batch, CancellationToken cancel) { Shots += batch.Count; return ValueTask.CompletedTask; }
        public Task CommitAsync() => Task.CompletedTask;
        public ValueTask DisposeAsync() => ValueTask.CompletedTask;
    }

    [Fact]
    public async Task EveryShotIsCountedAndTheOneSigmaEllipseHoldsItsShare()
    {
        const long shots = 40_000;
        var sampler = new ShotSampler(ScenarioLoader.Demo(), shotsPerDelay: shots);
        var inner = new Discard();
        var histograms = new IqHistograms(sampler, inner);
        await sampler.RunAsync((batch, cancel) => histograms.WriteAsync(batch, cancel));
        Assert.Equal(shots * sampler.Delays.Length, inner.Shots);
        for (int k = 0; k < sampler.Delays.Length; k++)
        {
            var counts = histograms.Counts[k];
            Assert.Equal(shots, counts.Cast<long>().Sum() + histograms.Outside[k]);
            // Beyond 4.5σ of the wider axis a bivariate normal leaves at most exp(−4.5²/2) ≈ 4e-5 of its mass (χ² with 2
            // degrees of freedom); allow 5 standard deviations of the count.
            Assert.InRange(histograms.Outside[k], 0, 4e-5 * shots + 5 * Math.Sqrt(4e-5 * shots) + 1);
            // The predicted 1σ ellipse holds 1 − e^(−1/2) = 0.3935 of a bivariate normal (χ² with 2 degrees of freedom).
            // Counting bins by their centres adds a discretisation error (bins are 0.14σ wide): allow 0.02, far above the
            // sampling error √(p(1 − p)/N) = 0.0024.
            var d = sampler.Delays[k];
            double n = sampler.Chain.AddedNoise, vi = d.Model.VarX + n, vq = d.Model.VarP + n, c = d.Model.CovXP, det = vi * vq - c * c;
            var (ci, cq, half) = histograms.Grids[k];
            double inside = 0, width = 2 * half / IqHistograms.Bins;
            for (int u = 0; u < IqHistograms.Bins; u++)
                for (int v = 0; v < IqHistograms.Bins; v++)
                {
                    double x = ci - half + (u + 0.5) * width - d.Model.MeanX, y = cq - half + (v + 0.5) * width - d.Model.MeanP;
                    if ((vq * x * x - 2 * c * x * y + vi * y * y) / det <= 1) inside += counts[u, v];
                }
            Assert.InRange(inside / shots, 1 - Math.Exp(-0.5) - 0.02, 1 - Math.Exp(-0.5) + 0.02);
        }
    }
}

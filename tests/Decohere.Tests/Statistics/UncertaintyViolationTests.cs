using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

/// <summary>
/// The readout estimate's check of the uncertainty relation det V = var_min·var_max ≥ ¼ (zero-point variance ½;
/// Robertson–Schrödinger, A. Serafini, Quantum Continuous Variables, CRC Press 2017, sec. 3.5).
/// </summary>
public class UncertaintyViolationTests
{
    private static QuadratureStatistics Shots(double varI, double varQ, int n, ulong seed)
    {
        var random = new StreamRandom(seed);
        var i = new double[n];
        var q = new double[n];
        for (int k = 0; k < n; k++)
        {
            i[k] = Math.Sqrt(varI) * random.Stream.NextNormal();
            q[k] = Math.Sqrt(varQ) * random.Stream.NextNormal();
        }
        return QuadratureStatistics.Of(i, q);
    }

    [Fact]
    public void TooMuchSubtractedNoiseIsFlaggedWithTheDelayAndTheInterval()
    {
        // Measured variance 0.5 + 1.0 per quadrature (vacuum plus 1 quantum of added noise), but 1.3 subtracted: the
        // inferred state has var_x = var_p ≈ 0.2 and det V ≈ 0.04, far below ¼ for 20 000 shots (σ of det ≈ 0.004).
        var stats = Shots(1.5, 1.5, 20_000, 7);
        var e = ReadoutEstimator.Estimate(stats, 1.3, ModeMoments.From(0.5, 0.5, 0, 0, 0), 11);
        Assert.True(e.ViolatesUncertainty);
        Assert.InRange(e.UncertaintyProduct.Value, 0.02, 0.06);
        Assert.True(e.UncertaintyProduct.High < 0.25);
        Assert.Equal(0.25, e.UncertaintyProduct.Model, 12);
        string warning = ReadoutEstimator.UncertaintyWarning(e, 0.002, 0.95)!;
        Assert.Contains("2 ms", warning);
        Assert.Contains("var_min·var_max", warning);
        Assert.Contains("below ¼", warning);
    }

    [Fact]
    public void AVacuumStateAtTheBoundIsRarelyFlagged()
    {
        // Vacuum has det V = ¼ exactly; the flag needs the whole 95% interval below ¼, so it should fire in at most
        // 2.5% of data sets. 200 sets: expected ≤ 5, σ ≈ 2.2; allow 12 (3σ).
        int flagged = 0;
        for (int k = 0; k < 200; k++)
        {
            var e = ReadoutEstimator.Estimate(Shots(0.5 + 0.5, 0.5 + 0.5, 2000, (ulong)(100 + k)), 0.5, null, (ulong)(1000 + k), resamples: 400);
            if (e.ViolatesUncertainty) flagged++;
        }
        Assert.InRange(flagged, 0, 12);
    }
}

using MathNet.Numerics.Distributions;
using Decohere.Analyses.Calibration;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Calibration;

public class CalibrationAnalysisTests
{
    private const double Gain = 2.4, Added = 3.1;
    private static readonly double[] Occupancies = [0, 0.5, 2, 5, 10, 20];

    private static CalibrationPoint[] Points(int shots, Random? rng)
    {
        return [.. Occupancies.Select((n, k) =>
        {
            double s2 = Gain * (n + 0.5) + Added;
            // (N − 1)s²/σ² ~ χ²_{N−1} (NIST/SEMATECH e-Handbook, sec. 7.2.3), drawn with MathNet's ChiSquared.
            double Draw() => rng is null ? s2 : s2 * ChiSquared.Sample(rng, shots - 1) / (shots - 1);
            return new CalibrationPoint(n, Draw(), Draw(), shots, $"row {k + 1}");
        })];
    }

    [Fact]
    public void ExactVariancesGiveTheTrueLineWithZeroDeviance()
    {
        // The χ² deviance ν(r − ln r − 1) is zero only at r = 1 (P. McCullagh, J. A. Nelder, GLM, 1989, sec. 8.3).
        var r = CalibrationAnalysis.Solve(Points(1000, null), settings: new CalibrationSettings { Parallel = false });
        Assert.Equal(Gain, r.Gain.Value, 1e-6 * Gain);
        Assert.Equal(Added, r.AddedNoise.Value, 1e-6 * Added);
        Assert.Equal(Added / Gain, r.AddedNoiseInputReferred.Value, 1e-6);
        Assert.True(r.Goodness.Deviance < 1e-9);
    }

    [Fact]
    public void IntervalsCoverTheTruthAcrossSeeds()
    {
        // 40 data sets: each 95% interval misses with probability 5%; allow ≤ 6 misses per parameter
        // (P(X > 6) = 0.34% for Binomial(40, 0.05); a seeded Monte Carlo check).
        int missGain = 0, missAdded = 0;
        for (int seed = 0; seed < 40; seed++)
        {
            var r = CalibrationAnalysis.Solve(Points(2000, new Random(seed)), settings: new CalibrationSettings { Parallel = false });
            if (!(r.Gain.Low <= Gain && Gain <= r.Gain.High)) missGain++;
            if (!(r.AddedNoise.Low <= Added && Added <= r.AddedNoise.High)) missAdded++;
            Assert.True(r.Gain.StandardError > 0 && r.AddedNoise.StandardError > 0);
        }
        Assert.InRange(missGain, 0, 6);
        Assert.InRange(missAdded, 0, 6);
    }

    [Fact]
    public void AStopRequestEndsTheCalibrationFit()
    {
        using var stop = new CancellationTokenSource();
        stop.Cancel();
        Assert.ThrowsAny<OperationCanceledException>(() =>
            CalibrationAnalysis.Solve(Points(1000, null), settings: new CalibrationSettings { Parallel = false }, cancel: stop.Token));
    }

    [Fact]
    public void OneOccupancyCannotSeparateGainFromNoise() =>
        Assert.Contains("two different prepared occupancies",
            Assert.Throws<InputException>(() => CalibrationAnalysis.Solve([new CalibrationPoint(1, 2, 2, 100, "row 1"), new CalibrationPoint(1, 2.1, 2, 100, "row 2")])).Message);

    [Fact]
    public void TheCalibrationIsComparedWithTheScenarioReadout()
    {
        // Exact variances give n_add/g = 3.1/2.4 quanta input-referred; a phenomenological readout of that added noise agrees,
        // one of twice that is named in a warning (its value lies far outside the interval).
        static IReadoutChain Stated(double n) => ReadoutChains.For(ScenarioLoader.Parse($$"""
            name: calibration-check
            model: effective
            modes: { bar: { kind: mechanical, frequency: 4 MHz, linewidth: 5 Hz, bath: { occupancy: 30 } } }
            stages: [{ name: hold, duration: 1 ms }]
            readout: { mode: bar, added_noise: {{n.ToString("R", System.Globalization.CultureInfo.InvariantCulture)}}, shots: 100, stage: hold, delays: [0 ms] }
            """, "calibration-check"));
        var data = Points(2000, new Random(7));
        var agree = CalibrationAnalysis.Solve(data, settings: new CalibrationSettings { Parallel = false, Expected = Stated(Added / Gain) });
        Assert.DoesNotContain(agree.Warnings, w => w.Contains("scenario readout"));
        var disagree = CalibrationAnalysis.Solve(data, settings: new CalibrationSettings { Parallel = false, Expected = Stated(2 * Added / Gain) });
        Assert.Contains(disagree.Warnings, w => w.Contains("scenario readout"));
    }
}

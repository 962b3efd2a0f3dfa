using System.Collections.Immutable;
using MathNet.Numerics.Distributions;
using Decohere.Analyses.Ringdown;
using Decohere.Core;

namespace Decohere.Tests.Analyses.Ringdown;

public class RingdownAnalysisTests
{
    private const double Gamma = 2 * Math.PI * 12, Initial = 100, Floor = 2;

    private static RingdownData Simulate(RingdownKind kind, int seed, int points = 200, double sigma = 0.1)
    {
        var random = new Random(seed);
        var exponential = new Exponential(1, random);
        var normal = new Normal(0, 1, random);
        var t = Enumerable.Range(0, points).Select(i => i * 5 / Gamma / points).ToImmutableArray();
        var mean = t.Select(x => Initial * Math.Exp(-Gamma * x) + Floor).ToArray();
        // Exponential(1) times the mean: the energy of a thermal state about its mean (common practice for a ring-down
        // recorded in energy, one sample per point).
        var values = kind == RingdownKind.Energy
            ? mean.Select(m => m * exponential.Sample()).ToImmutableArray()
            : mean.Select(m => Math.Sqrt(m) + sigma * normal.Sample()).ToImmutableArray();
        ImmutableArray<double>? sigmas = kind == RingdownKind.Amplitude ? [.. Enumerable.Repeat(sigma, points)] : null;
        return new RingdownData($"sim-{seed}", kind, t, values, sigmas);
    }

    /// <summary>
    /// Over 200 simulated ring-downs the 95% profile-likelihood intervals of γ and of the floor contain the truth 190 times
    /// on average; the binomial σ is √(200·0.05·0.95) = 3.1, and we allow 3σ below (181). The mean of γ̂ lies within 4
    /// standard errors of the mean of the truth (its bias is O(1/N)).
    /// </summary>
    [Theory]
    [InlineData(RingdownKind.Energy)]
    [InlineData(RingdownKind.Amplitude)]
    public void IntervalsCoverTheTruth(RingdownKind kind)
    {
        int seeds = 200, gammaCovered = 0, floorCovered = 0;
        var estimates = new double[seeds];
        var settings = new RingdownSettings { FrequencyHz = 4e6 };
        for (int seed = 0; seed < seeds; seed++)
        {
            var r = RingdownAnalysis.Solve(Simulate(kind, 7000 + seed), settings);
            estimates[seed] = r.DecayRate.Value;
            if (r.DecayRate.Low <= Gamma && Gamma <= r.DecayRate.High) gammaCovered++;
            double floor = kind == RingdownKind.Energy ? Floor : Math.Sqrt(Floor);
            if (r.Floor.Low <= floor && floor <= r.Floor.High) floorCovered++;
        }
        Assert.InRange(gammaCovered, 181, 199);
        Assert.InRange(floorCovered, 181, 199);
        double mean = estimates.Average(), sd = Math.Sqrt(estimates.Select(x => (x - mean) * (x - mean)).Sum() / (seeds - 1));
        Assert.InRange(mean, Gamma - 4 * sd / Math.Sqrt(seeds), Gamma + 4 * sd / Math.Sqrt(seeds));
    }

    /// <summary>Q = 2πf/γ = f/linewidth (the project's convention), its interval the image of γ's.</summary>
    [Fact]
    public void QualityFactorIsTheImageOfTheDecayRate()
    {
        var r = RingdownAnalysis.Solve(Simulate(RingdownKind.Amplitude, 1), new RingdownSettings { FrequencyHz = 4e6 });
        Assert.Equal(4e6 / r.LinewidthHz.Value, r.QualityFactor!.Value, 1e-6 * r.QualityFactor.Value);
        Assert.Equal(2 * Math.PI * 4e6 / r.DecayRate.High!.Value, r.QualityFactor.Low!.Value, 1e-9 * r.QualityFactor.Value);
    }

    [Fact]
    public void NegativeEnergiesAreRefused()
    {
        var d = Simulate(RingdownKind.Energy, 2);
        var bad = d with { Values = d.Values.SetItem(3, -1) };
        var e = Assert.Throws<InputException>(() => RingdownAnalysis.Solve(bad));
        Assert.Contains("energy must be ≥ 0", e.Message);
    }
}

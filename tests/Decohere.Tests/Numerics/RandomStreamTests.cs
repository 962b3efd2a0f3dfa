using MathNet.Numerics.Distributions;
using Decohere.Core;
using Decohere.Numerics;
using Decohere.Tests.Sampling;

namespace Decohere.Tests.Numerics;

public class RandomStreamTests
{
    [Fact]
    public void NormalDeviatesPassAKolmogorovSmirnovTestAgainstMathNet()
    {
        // Reference CDF: MathNet.Numerics Normal. Critical value at α = 0.001: 1.949/√M (asymptotic Kolmogorov law).
        var random = new RandomStream(20261201);
        const int m = 200_000;
        var z = new double[m];
        random.FillNormal(z);
        var u = z.Select(Normal.CDF(0, 1, 0) is var _ ? (Func<double, double>)(x => Normal.CDF(0, 1, x)) : null!).ToArray();
        Array.Sort(u);
        double d = 0;
        for (int k = 0; k < m; k++) d = Math.Max(d, Math.Max((k + 1.0) / m - u[k], u[k] - (double)k / m));
        Assert.True(d < 1.949 / Math.Sqrt(m), $"KS distance {d:F5}");
    }

    [Fact]
    public void TailBeyondTheZigguratBaseHasTheNormalProbability()
    {
        // P(|Z| > R) = 2(1 − Φ(R)) with R = 3.6541528853610088 (Marsaglia & Tsang 2000); MathNet's Normal CDF; 5σ binomial.
        var random = new RandomStream(11);
        const int m = 4_000_000;
        int beyond = 0;
        double r = 3.6541528853610088;
        for (int k = 0; k < m; k++) if (Math.Abs(random.NextNormal()) > r) beyond++;
        double p = 2 * (1 - Normal.CDF(0, 1, r));
        MonteCarloAssert.Within(p * m, beyond, Math.Sqrt(m * p * (1 - p)), 5, "tail count");
    }

    [Fact]
    public void UniformsMatchTheXoshiro256StarStarOfMathNet()
    {
        // Reference: MathNet.Numerics.Random.Xoshiro256StarStar, an independent implementation of the same generator
        // (Blackman & Vigna 2021) seeded with SplitMix64 from the seed; both map the top 53 bits to [0, 1).
        var theirs = new MathNet.Numerics.Random.Xoshiro256StarStar(12345, threadSafe: false);
        var ours = new RandomStream(12345);
        for (int k = 0; k < 1000; k++) Assert.Equal(theirs.NextDouble(), ours.NextDouble());
    }

    [Fact]
    public void StreamsOfNeighbouringBlocksDiffer()
    {
        // Common practice: derived seeds of neighbouring (delay, block) indices must not collide.
        var seeds = new HashSet<ulong>();
        for (int d = 0; d < 20; d++)
            for (int b = 0; b < 500; b++) seeds.Add(Seeds.Derive(1, SeedStream.Shots, d, b));
        Assert.Equal(20 * 500, seeds.Count);
    }
}

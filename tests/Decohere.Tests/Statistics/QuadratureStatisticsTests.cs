using Decohere.Numerics;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

public class QuadratureStatisticsTests
{
    [Fact]
    public void MergedBlocksEqualTheWholeSample()
    {
        // Reference: MathNet.Numerics Statistics.Mean/Variance/Covariance of the whole sample; a large common offset
        // (1e6) checks that the pairwise update keeps its digits (Chan, Golub, LeVeque 1982).
        var random = new RandomStream(3);
        var i = new double[10_007];
        var q = new double[i.Length];
        for (int k = 0; k < i.Length; k++) { i[k] = 1e6 + random.NextNormal(); q[k] = -2e6 + 0.3 * i[k] + random.NextNormal(); }
        var merged = QuadratureStatistics.Empty;
        for (int start = 0; start < i.Length; start += 1000)
        {
            int n = Math.Min(1000, i.Length - start);
            merged = merged.Merge(QuadratureStatistics.Of(i.AsSpan(start, n), q.AsSpan(start, n)));
        }
        Assert.Equal(i.Length, merged.Count);
        Assert.Equal(MathNet.Numerics.Statistics.Statistics.Mean(i), merged.MeanI, 1e-6);
        Assert.Equal(MathNet.Numerics.Statistics.Statistics.Variance(i), merged.VarianceI, 1e-7);
        Assert.Equal(MathNet.Numerics.Statistics.Statistics.Variance(q), merged.VarianceQ, 1e-7);
        Assert.Equal(MathNet.Numerics.Statistics.Statistics.Covariance(i, q), merged.CovarianceIQ, 1e-7);
    }

    [Fact]
    public void EstimatesSubtractTheAddedNoiseAndUseTheEigenvaluesOfTheInferredBlock()
    {
        // Closed form: eigenvalues of [[a, c], [c, b]] are (a+b)/2 ∓ √(((a−b)/2)² + c²); occupancy and dB per PHYSICS.md.
        var s = new QuadratureStatistics(1001, 0.2, -0.1, 1000 * 1.8, 1000 * 4.0, 1000 * 0.6);
        var e = ReadoutEstimator.Estimate(s, 1.2, null, 1);
        double a = 0.6, b = 2.8, c = 0.6;
        double min = (a + b) / 2 - Math.Sqrt((a - b) * (a - b) / 4 + c * c);
        Assert.Equal(a, e.VarX.Value, 1e-12);
        Assert.Equal(b, e.VarP.Value, 1e-12);
        Assert.Equal(min, e.VarMin.Value, 1e-12);
        Assert.Equal((a + b) / 2 - 0.5 + (0.04 + 0.01) / 2, e.Occupancy.Value, 1e-12);
        Assert.Equal(10 * Math.Log10(0.5 / min), e.SqueezingDb.Value, 1e-12);
        Assert.True(e.VarMin.Low < e.VarMin.Value && e.VarMin.Value < e.VarMin.High);
        Assert.True(double.IsNaN(e.VarMin.Z));
    }
}

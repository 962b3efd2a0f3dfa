using MathNet.Numerics.LinearAlgebra;
using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class DenseProductTests
{
    [Theory]
    [InlineData(1, 1, 1)]
    [InlineData(7, 5, 3)]
    [InlineData(9, 13, 300)]
    [InlineData(100, 37, 513)]
    [InlineData(257, 255, 256)]
    public void MatchesMathNetForEveryTranspose(int m, int n, int k)
    {
        // Source: MathNet's own dense product as an independent reference; rounding of a k-term dot product is ≤ k·ε relative.
        var random = new Random(m * 1000 + n * 10 + k);
        foreach (bool ta in new[] { false, true })
        {
            foreach (bool tb in new[] { false, true })
            {
                var a = Models.RandomMatrix(random, ta ? k : m, ta ? m : k, 1.0);
                var b = Models.RandomMatrix(random, tb ? n : k, tb ? k : n, 1.0);
                var c0 = Models.RandomMatrix(random, m, n, 1.0);
                var expected = 0.7 * (ta ? a.Transpose() : a) * (tb ? b.Transpose() : b) + 0.3 * c0;

                var c = c0.Clone();
                DenseProduct.MultiplyInto(0.7, a, ta, b, tb, 0.3, c);

                Assert.True(Models.RelativeDifference(c, expected) < 1e-15 * Math.Sqrt(k) * 10, $"{m}×{n}×{k} {ta} {tb}");
            }
        }
    }

    [Fact]
    public void EachElementIsIndependentOfTheColumnPartition()
    {
        // Source: the design contract that results do not depend on how columns are split among threads: every column slice,
        // computed on its own (other tiles, other edges, one thread), must equal the full product bit for bit.
        var random = new Random(7);
        const int n = 301;
        var a = Models.RandomMatrix(random, n, n, 1.0);
        var b = Models.RandomMatrix(random, n, n, 1.0);
        var full = DenseProduct.Multiply(a, b);
        foreach (var (start, count) in new[] { (0, 1), (1, 5), (13, 7), (100, 150), (295, 6) })
        {
            var slice = DenseProduct.Multiply(a, b.SubMatrix(0, n, start, count));
            Assert.Equal(full.SubMatrix(0, n, start, count), slice);
        }
    }

    [Fact]
    public void BetaZeroIgnoresOldContents()
    {
        // Source: BLAS convention (C. L. Lawson et al., ACM Trans. Math. Softw. 5, 308 (1979)): β = 0 means C is not read.
        var a = Matrix<double>.Build.DenseIdentity(10);
        var c = Matrix<double>.Build.Dense(10, 10, double.NaN);
        DenseProduct.MultiplyInto(1.0, a, false, a, false, 0.0, c);
        Assert.Equal(a, c);
    }

    [Fact]
    public void CongruenceIsSymmetricAndMatchesMathNet()
    {
        // Source: Φ V Φᵀ + Q evaluated by MathNet as an independent reference.
        var random = new Random(3);
        const int n = 120;
        var phi = Models.RandomMatrix(random, n, n, 1.0);
        var v = Models.RandomSpd(random, n);
        var q = Models.RandomSpd(random, n);
        var result = DenseProduct.Congruence(phi, v, q);
        Assert.Equal(result, result.Transpose());
        Assert.True(Models.RelativeDifference(result, phi * v * phi.Transpose() + q) < 1e-14);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(63)]
    [InlineData(200)]
    public void LUSolveHasSmallBackwardError(int n)
    {
        // Source: backward stability of partial pivoting in practice, ‖A X − B‖ ≤ c·n·ε‖A‖‖X‖ (N. J. Higham, Accuracy and
        // Stability of Numerical Algorithms, 2nd ed., SIAM (2002), Thm. 9.4), and MathNet's LU as an independent reference.
        var random = new Random(n);
        var a = Models.RandomMatrix(random, n, n, 1.0);
        var b = Models.RandomMatrix(random, n, 17, 1.0);
        var x = b.Clone();
        DenseLU.Factor(a.AsColumnMajorArray(), n).SolveInPlace(x.AsColumnMajorArray(), 17);
        double backward = (a * x - b).FrobeniusNorm() / (a.FrobeniusNorm() * x.FrobeniusNorm());
        Assert.True(backward < 1e-15 * n, $"{backward:G3}");
        Assert.True(Models.RelativeDifference(x, a.LU().Solve(b)) < 1e-10);
    }

    [Fact]
    public void LUOfSingularMatrixIsRefused()
    {
        // Source: a zero column has no pivot.
        var a = Matrix<double>.Build.Dense(70, 70, (i, j) => j == 40 ? 0.0 : i == j ? 1.0 : 0.5);
        Assert.Throws<InvalidOperationException>(() => DenseLU.Factor(a.AsColumnMajorArray(), 70));
    }
}

using MathNet.Numerics.LinearAlgebra;

using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class RealSchurTests
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(7)]
    [InlineData(60)]
    [InlineData(150)]
    public void ReconstructsWithOrthogonalZAndQuasiTriangularT(int n)
    {
        // Source: the definition A = Z T Zᵀ, ZᵀZ = I, T zero below its 1×1/2×2 blocks, and every 2×2 block a complex pair
        // (Golub and Van Loan, Matrix Computations, 4th ed., Thm. 7.4.1); eigenvalues against MathNet's eigensolver.
        var random = new Random(n);
        var a = Models.RandomMatrix(random, n, n, 1.0);
        var schur = RealSchur.Decompose(a);
        var t = Matrix<double>.Build.Dense(n, n, (i, j) => schur.T[i * n + j]);
        var z = schur.ZMatrix();

        Assert.True((z * t * z.Transpose() - a).FrobeniusNorm() <= 1e-14 * n * a.FrobeniusNorm());
        Assert.True((z.TransposeThisAndMultiply(z) - Matrix<double>.Build.DenseIdentity(n)).FrobeniusNorm() <= 1e-14 * n);
        int[] starts = schur.BlockStarts;
        for (int b = 0; b + 1 < starts.Length; b++)
        {
            int size = starts[b + 1] - starts[b];
            Assert.InRange(size, 1, 2);
            if (size == 2)
            {
                int i = starts[b];
                double p = 0.5 * (t[i, i] - t[i + 1, i + 1]);
                Assert.True(p * p + t[i, i + 1] * t[i + 1, i] < 0, "a 2×2 block with real eigenvalues was left");
            }
        }

        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j < i; j++)
            {
                bool inBlock = j == i - 1 && Array.IndexOf(starts, i) < 0;
                if (!inBlock) Assert.Equal(0.0, t[i, j]);
            }
        }

        var expected = a.Evd(Symmetricity.Asymmetric).EigenValues.OrderBy(e => e.Real).ThenBy(e => e.Imaginary).ToArray();
        var actual = schur.Eigenvalues.OrderBy(e => e.Real).ThenBy(e => e.Imaginary).ToArray();
        for (int i = 0; i < n; i++) Assert.True((expected[i] - actual[i]).Magnitude < 1e-10 * Math.Max(1, a.FrobeniusNorm()));
    }

    [Fact]
    public void TriangularAndZeroInputsNeedNoIteration()
    {
        // Source: an upper triangular matrix is its own Schur form (Z = I); the zero matrix likewise.
        var a = Matrix<double>.Build.Dense(50, 50, (i, j) => j >= i ? 1.0 + i - 0.5 * j : 0.0);
        var schur = RealSchur.Decompose(a);
        Assert.Equal(Matrix<double>.Build.DenseIdentity(50), schur.ZMatrix());
        var zero = RealSchur.Decompose(Matrix<double>.Build.Dense(40, 40));
        Assert.All(zero.Eigenvalues, e => Assert.Equal(0.0, e.Magnitude));
    }
}

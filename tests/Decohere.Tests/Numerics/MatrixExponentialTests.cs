using MathNet.Numerics.LinearAlgebra;
using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class MatrixExponentialTests
{
    [Theory]
    [InlineData(1e-3)] // Padé [3/3]
    [InlineData(0.2)] // [5/5]
    [InlineData(0.7)] // [7/7]
    [InlineData(1.5)] // [9/9]
    [InlineData(4.0)] // [13/13], no scaling
    [InlineData(40.0)] // [13/13] with scaling and squaring
    public void RotationGeneratorGivesRotation(double theta)
    {
        // Source: J = [[0,1],[-1,0]] has J² = −I, so e^{θJ} = cos θ I + sin θ J (Euler's formula).
        var a = Matrix<double>.Build.DenseOfArray(new[,] { { 0, theta }, { -theta, 0 } });
        var expected = Matrix<double>.Build.DenseOfArray(new[,]
        {
            { Math.Cos(theta), Math.Sin(theta) },
            { -Math.Sin(theta), Math.Cos(theta) },
        });

        var actual = MatrixExponential.Compute(a);

        Assert.True(Models.RelativeDifference(actual, expected) < 1e-14 * Math.Max(1, theta));
    }

    [Fact]
    public void NilpotentMatrixGivesFiniteSeries()
    {
        // Source: for strictly upper triangular N (N⁴ = 0) the exponential series terminates,
        // e^N = I + N + N²/2 + N³/6, evaluated here exactly term by term.
        var n = Matrix<double>.Build.DenseOfArray(new double[,]
        {
            { 0, 3, -2, 5 },
            { 0, 0, 4, 1 },
            { 0, 0, 0, -3 },
            { 0, 0, 0, 0 },
        });
        var n2 = n * n;
        var expected = Matrix<double>.Build.DenseIdentity(4) + n + n2 / 2 + n2 * n / 6;

        var actual = MatrixExponential.Compute(n);

        Assert.True(Models.RelativeDifference(actual, expected) < 1e-14);
        Assert.Equal(0.0, actual[3, 0]);
    }

    [Fact]
    public void DiagonalisableMatrixMatchesEigenbasis()
    {
        // Source: A = S Λ S⁻¹ ⇒ e^A = S e^Λ S⁻¹ (diagonalisable case of the Jordan-form definition,
        // N. J. Higham, Functions of Matrices (SIAM, 2008), ch. 1).
        var s = Matrix<double>.Build.DenseOfArray(new double[,] { { 1, 2, 0 }, { 0, 1, 1 }, { 1, 0, 1 } });
        double[] lambda = [-1.0, 0.5, 2.0];
        var sInv = s.Inverse();
        var a = s * Matrix<double>.Build.DenseOfDiagonalArray(lambda) * sInv;
        var expected = s * Matrix<double>.Build.DenseOfDiagonalArray(lambda.Select(Math.Exp).ToArray()) * sInv;

        var actual = MatrixExponential.Compute(a);

        Assert.True(Models.RelativeDifference(actual, expected) < 1e-13);
    }

    [Theory]
    [InlineData(2.0, -3.0, 60.0)]
    [InlineData(-30.0, -40.0, 400.0)]
    [InlineData(12.0, 11.5, -250.0)]
    public void LargeNormTriangularMatrixMatchesDividedDifference(double a11, double a22, double a12)
    {
        // Source: for upper triangular T, f(T)_12 = t_12 (f(t_11) − f(t_22)) / (t_11 − t_22)
        // (N. J. Higham, Functions of Matrices (SIAM, 2008), §4.6; for exp it is also the solution of
        // y' = t_11 y + t_12 e^{t_22 s}, y(0) = 0, at s = 1).
        // ‖A‖_1 ≥ 60 ≫ θ13 = 5.37, so this exercises scaling and squaring.
        var a = Matrix<double>.Build.DenseOfArray(new[,] { { a11, a12 }, { 0, a22 } });
        double e1 = Math.Exp(a11), e2 = Math.Exp(a22);
        var expected = Matrix<double>.Build.DenseOfArray(new[,]
        {
            { e1, a12 * (e1 - e2) / (a11 - a22) },
            { 0, e2 },
        });

        var actual = MatrixExponential.Compute(a);

        Assert.True(Math.Abs(actual[0, 0] - expected[0, 0]) <= 1e-13 * Math.Abs(expected[0, 0]));
        Assert.True(Math.Abs(actual[0, 1] - expected[0, 1]) <= 1e-12 * Math.Abs(expected[0, 1]));
        Assert.True(Math.Abs(actual[1, 1] - expected[1, 1]) <= 1e-13 * Math.Abs(expected[1, 1]));
        Assert.Equal(0.0, actual[1, 0]);
    }

    [Theory]
    [InlineData(0.5)] // Padé [7/7]
    [InlineData(3.0)] // [13/13]
    [InlineData(60.0)] // [13/13] with squaring
    public void LargeSymmetricMatrixMatchesEigenbasis(double scale)
    {
        // Source: for symmetric A = S Λ Sᵀ, e^A = S e^Λ Sᵀ, with MathNet's symmetric eigensolver as the independent method;
        // n = 150 runs the blocked product and LU.
        var random = new Random(11);
        const int n = 150;
        var m = Models.RandomMatrix(random, n, n, 1.0);
        var a = (m + m.Transpose()) * (scale / (m + m.Transpose()).L1Norm());
        var evd = a.Evd(Symmetricity.Symmetric);
        var expected = evd.EigenVectors * Matrix<double>.Build.DenseOfDiagonalVector(evd.EigenValues.Map(z => Math.Exp(z.Real)))
            * evd.EigenVectors.Transpose();

        var actual = MatrixExponential.Compute(a);

        Assert.True(Models.RelativeDifference(actual, expected) < 1e-13 * Math.Max(1, scale), $"{Models.RelativeDifference(actual, expected):G3}");
    }

    [Theory]
    [InlineData(5, 0.3)] // small blocks: MathNet products, Padé [5/5]
    [InlineData(5, 30.0)] // with squaring, so F₁₁ is carried along
    [InlineData(60, 1.0)] // blocked product and LU, Padé [9/9] or [13/13]
    [InlineData(60, 30.0)]
    public void BlockTriangularFormMatchesDenseExponential(int n, double scale)
    {
        // Source: f of a block upper triangular matrix is block upper triangular (N. J. Higham, Functions of Matrices, SIAM
        // (2008), Thm. 1.13), so its blocks must equal those of the dense 2n×2n exponential, which is tested against the
        // eigenbasis above.
        var random = new Random(n);
        var x11 = Models.RandomMatrix(random, n, n, scale / n);
        var x12 = Models.RandomMatrix(random, n, n, scale / n);
        var x22 = Models.RandomMatrix(random, n, n, scale / n);
        var full = Matrix<double>.Build.Dense(2 * n, 2 * n);
        full.SetSubMatrix(0, 0, x11);
        full.SetSubMatrix(0, n, x12);
        full.SetSubMatrix(n, n, x22);
        var dense = MatrixExponential.Compute(full);

        var (f11, f12, f22) = MatrixExponential.ComputeBlockTriangular(x11, x12, x22, wantF11: true);

        double tolerance = 1e-13 * Math.Max(1, scale);
        Assert.True(Models.RelativeDifference(f11!, dense.SubMatrix(0, n, 0, n)) < tolerance);
        Assert.True(Models.RelativeDifference(f12, dense.SubMatrix(0, n, n, n)) < tolerance);
        Assert.True(Models.RelativeDifference(f22, dense.SubMatrix(n, n, n, n)) < tolerance);
    }

    [Fact]
    public void ZeroMatrixGivesIdentity()
    {
        // Source: e^0 = I (series definition).
        var actual = MatrixExponential.Compute(Matrix<double>.Build.Dense(5, 5));
        Assert.Equal(Matrix<double>.Build.DenseIdentity(5), actual);
    }

    [Theory]
    [InlineData(-3.7)]
    [InlineData(0.0)]
    [InlineData(700.0)]
    public void OneByOneIsScalarExp(double x)
    {
        // Source: for 1×1 matrices the matrix exponential is the scalar exponential.
        var actual = MatrixExponential.Compute(Matrix<double>.Build.Dense(1, 1, x));
        Assert.Equal(Math.Exp(x), actual[0, 0]);
    }

    [Fact]
    public void BadInputNamesTheArgument()
    {
        var ex = Assert.Throws<ArgumentException>(() => MatrixExponential.Compute(Matrix<double>.Build.Dense(2, 3)));
        Assert.Equal("a", ex.ParamName);
        var nan = Matrix<double>.Build.Dense(2, 2);
        nan[1, 0] = double.NaN;
        ex = Assert.Throws<ArgumentException>(() => MatrixExponential.Compute(nan));
        Assert.Contains("a[1,0]", ex.Message);
    }
}

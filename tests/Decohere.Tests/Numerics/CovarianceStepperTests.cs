using MathNet.Numerics.LinearAlgebra;
using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class CovarianceStepperTests
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(4)]
    [InlineData(6)]
    [InlineData(9)]
    [InlineData(12)]
    [InlineData(13)]
    [InlineData(80)]
    [InlineData(83)]
    public void MatchesDenseProducts(int n)
    {
        // Source: the update's definition V' = Φ V Φᵀ + Q, μ' = Φ μ, evaluated with MathNet's
        // dense products (an independent implementation); sizes cover the unrolled paths (2, 4),
        // the scalar tail (6), and 4×8 blocks with row and column remainders (9, 12, 13, 83).
        var random = new Random(1000 + n);
        var phi = Models.RandomMatrix(random, n, n, 1.5 / Math.Sqrt(n));
        var q = Models.RandomSpd(random, n);
        var stepper = new CovarianceStepper(new Discretization(phi, q, 1e-3));
        var v = Models.RandomSpd(random, n);
        var mu = Vector<double>.Build.Dense(n, _ => random.NextDouble() - 0.5);
        double[] flatV = ToRowMajor(v);
        double[] flatMu = mu.ToArray();

        for (int step = 0; step < 3; step++)
        {
            stepper.Step(flatV, flatMu);
            v = phi * v * phi.Transpose() + q;
            mu = phi * mu;

            var actual = Matrix<double>.Build.Dense(n, n, (i, j) => flatV[i * n + j]);
            Assert.True(Models.RelativeDifference(actual, v) <= 1e-12, $"n={n} step={step}: {Models.RelativeDifference(actual, v):G3}");
            Assert.Equal(actual, actual.Transpose());
            Assert.True((Vector<double>.Build.DenseOfArray(flatMu) - mu).L2Norm() <= 1e-12 * mu.L2Norm());
        }

        Assert.Equal(n, stepper.Dimension);
    }

    [Fact]
    public void RepeatedStepsReachTheSteadyState()
    {
        // Source: V_ss is the fixed point of V ← Φ V Φᵀ + Q for an exact discretisation (PHYSICS.md).
        var (a, d) = LyapunovTests.Case("coupled-4");
        var stepper = new CovarianceStepper(VanLoan.Discretize(a, d, 0.5));
        var flat = new double[16];
        var mean = new double[4];
        for (int k = 0; k < 2000; k++) stepper.Step(flat, mean);
        var vss = Lyapunov.SolveSteadyState(a, d);
        var actual = Matrix<double>.Build.Dense(4, 4, (i, j) => flat[i * 4 + j]);
        Assert.True(Models.RelativeDifference(actual, vss) < 1e-12);
    }

    [Theory]
    [InlineData(2)]
    [InlineData(4)]
    [InlineData(13)]
    [InlineData(80)]
    public void StepDoesNotAllocate(int n)
    {
        // Source: the allocation counter of the runtime (GC.GetAllocatedBytesForCurrentThread).
        var random = new Random(n);
        var stepper = new CovarianceStepper(new Discretization(
            Models.RandomMatrix(random, n, n, 0.5 / Math.Sqrt(n)), Models.RandomSpd(random, n), 1.0));
        double[] v = ToRowMajor(Models.RandomSpd(random, n));
        double[] mu = new double[n];
        stepper.Step(v, mu);

        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int k = 0; k < 200; k++) stepper.Step(v, mu);
        long after = GC.GetAllocatedBytesForCurrentThread();

        Assert.Equal(0, after - before);
    }

    [Fact]
    public void WrongLengthsNameTheArgument()
    {
        var stepper = new CovarianceStepper(new Discretization(
            Matrix<double>.Build.DenseIdentity(3), Matrix<double>.Build.Dense(3, 3), 1.0));
        Assert.Equal("covariance", Assert.Throws<ArgumentException>(() => stepper.Step(new double[8], new double[3])).ParamName);
        Assert.Equal("mean", Assert.Throws<ArgumentException>(() => stepper.Step(new double[9], new double[2])).ParamName);
    }

    private static double[] ToRowMajor(Matrix<double> m)
    {
        int n = m.RowCount;
        var flat = new double[n * n];
        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j < n; j++) flat[i * n + j] = m[i, j];
        }

        return flat;
    }
}

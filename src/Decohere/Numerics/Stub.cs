// TEMPORARY stub until the numerics branch merges. Not committed.
using MathNet.Numerics.LinearAlgebra;
namespace Decohere.Numerics;
public static class MatrixExponential {
    public static Matrix<double> Compute(Matrix<double> a) {
        int s = Math.Max(0, (int)Math.Ceiling(Math.Log2(a.L1Norm() + 1e-300)) + 4);
        var x = a / Math.Pow(2, s); var term = Matrix<double>.Build.DenseIdentity(a.RowCount); var sum = term.Clone();
        for (int k = 1; k < 20; k++) { term = term * x / k; sum += term; }
        for (int i = 0; i < s; i++) sum = sum * sum; return sum; }
}
public sealed record Discretization(Matrix<double> Phi, Matrix<double> Q, double Step);
public static class VanLoan {
    public static Discretization Discretize(Matrix<double> a, Matrix<double> d, double tau) {
        int n = a.RowCount; int m = 0; double dt = tau; while (a.L1Norm() * dt > 1 && m < 60) { dt /= 2; m++; }
        var big = Matrix<double>.Build.Dense(2 * n, 2 * n); big.SetSubMatrix(0, 0, -a * dt); big.SetSubMatrix(0, n, d * dt); big.SetSubMatrix(n, n, a.Transpose() * dt);
        var e = MatrixExponential.Compute(big); var phiT = e.SubMatrix(n, n, n, n); var phi = phiT.Transpose(); var q = phi * e.SubMatrix(0, n, n, n);
        for (int i = 0; i < m; i++) { q = phi * q * phi.Transpose() + q; phi = phi * phi; }
        return new Discretization(phi, (q + q.Transpose()) * 0.5, tau); }
}
public sealed class UnstableDynamicsException(double growthRate, string message) : Exception(message) { public double GrowthRate { get; } = growthRate; }
public static class Lyapunov {
    public static Matrix<double> SolveSteadyState(Matrix<double> a, Matrix<double> d) {
        int n = a.RowCount; var I = Matrix<double>.Build.DenseIdentity(n);
        var k = I.KroneckerProduct(a) + a.KroneckerProduct(I); var rhs = -Vector<double>.Build.DenseOfArray(d.ToColumnMajorArray());
        var x = k.Solve(rhs); var v = Matrix<double>.Build.DenseOfColumnMajor(n, n, x.ToArray()); return (v + v.Transpose()) * 0.5; }
    public static double RelativeResidual(Matrix<double> a, Matrix<double> v, Matrix<double> d) =>
        (a * v + v * a.Transpose() + d).FrobeniusNorm() / (2 * a.FrobeniusNorm() * v.FrobeniusNorm() + d.FrobeniusNorm());
}
public sealed class CovarianceStepper {
    private readonly double[] _phi, _q, _w; public int Dimension { get; }
    public CovarianceStepper(Discretization d) { Dimension = d.Phi.RowCount; _phi = d.Phi.ToRowMajorArray(); _q = d.Q.ToRowMajorArray(); _w = new double[Dimension * Dimension + Dimension]; }
    public void Step(Span<double> v, Span<double> mean) { int n = Dimension;
        for (int i = 0; i < n; i++) for (int j = 0; j < n; j++) { double s = 0; for (int k = 0; k < n; k++) s += _phi[i * n + k] * v[k * n + j]; _w[i * n + j] = s; }
        for (int i = 0; i < n; i++) for (int j = 0; j < n; j++) { double s = _q[i * n + j]; for (int k = 0; k < n; k++) s += _w[i * n + k] * _phi[j * n + k]; v[i * n + j] = s; }
        for (int i = 0; i < n; i++) { double s = 0; for (int k = 0; k < n; k++) s += _phi[i * n + k] * mean[k]; _w[n * n + i] = s; }
        for (int i = 0; i < n; i++) mean[i] = _w[n * n + i]; }
}

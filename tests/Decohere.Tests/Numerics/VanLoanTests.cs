using MathNet.Numerics.LinearAlgebra;
using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class VanLoanTests
{
    [Theory]
    [InlineData(1e-9)]
    [InlineData(0.3)]
    [InlineData(5.0)]
    [InlineData(2000.0)]
    public void DampedModeMatchesClosedForm(double gammaTau)
    {
        // Source: for A = −γ/2 I, D = γ(n+½) I: Φ = e^{−γτ/2} I and
        // Q = ∫_0^τ e^{−γs} γ(n+½) ds I = (n+½)(1 − e^{−γτ}) I (direct integration).
        const double gamma = 1.3e6;
        const double n = 12.0;
        double tau = gammaTau / gamma;
        var (a, d) = DampedMode(gamma, n);

        var disc = VanLoan.Discretize(a, d, tau);

        double phi = Math.Exp(-gammaTau / 2);
        double q = (n + 0.5) * OneMinusExp(gammaTau);
        for (int i = 0; i < 2; i++)
        {
            Assert.True(Math.Abs(disc.Phi[i, i] - phi) <= 1e-12 * phi);
            Assert.True(Math.Abs(disc.Q[i, i] - q) <= 1e-12 * q);
        }

        Assert.Equal(0.0, disc.Q[0, 1], 15);
        Assert.Equal(tau, disc.Step);
    }

    [Fact]
    public void StiffCavityStageDoesNotOverflow()
    {
        // Source: PHYSICS.md "Numerics" — κτ ~ 10³ makes the one-shot block exponential overflow
        // (e^{κτ/2}); the expected values are the closed form of the damped mode above.
        const double kappa = 1.3e6;
        const double n = 0.2;
        double tau = 2000 / kappa;
        var (a, d) = DampedMode(kappa, n);

        var disc = VanLoan.Discretize(a, d, tau);

        Assert.All(disc.Phi.Enumerate(), x => Assert.True(double.IsFinite(x) && Math.Abs(x) < 1e-300));
        double q = (n + 0.5) * OneMinusExp(2000.0);
        Assert.All(disc.Q.Enumerate(), x => Assert.True(double.IsFinite(x)));
        Assert.True(Math.Abs(disc.Q[0, 0] - q) <= 1e-12 * q);
        Assert.True(Math.Abs(disc.Q[1, 1] - q) <= 1e-12 * q);
        Assert.True(Math.Abs(disc.Q[0, 1]) <= 1e-12 * q);
    }

    public static TheoryData<int> CoupledCases => new() { 0, 1, 2 };

    [Theory]
    [MemberData(nameof(CoupledCases))]
    public void CoupledNonNormalCaseMatchesRungeKutta(int which)
    {
        // Source: an independent integration of dV/dt = A V + V Aᵀ + D by classical RK4
        // (W. Kutta, Z. Math. Phys. 46, 435 (1901)), fine enough that its O(h⁴) error is below 1e-11.
        var (a, d, tau) = CoupledCase(which);
        var random = new Random(17 + which);
        var v0 = Models.RandomSpd(random, 4);

        var disc = VanLoan.Discretize(a, d, tau);
        var exact = disc.Phi * v0 * disc.Phi.Transpose() + disc.Q;
        var rk4 = IntegrateRk4(a, d, v0, tau, steps: (int)Math.Ceiling(a.L1Norm() * tau * 1000));

        Assert.True(Models.RelativeDifference(exact, rk4) <= 1e-9, $"relative difference {Models.RelativeDifference(exact, rk4):G3}");
        Assert.Equal(disc.Q, disc.Q.Transpose());
    }

    [Theory]
    [InlineData(2.0 * Math.PI * 25e3)]
    [InlineData(2.0 * Math.PI * 100)]
    public void StiffOptomechanicalStageMatchesSteadyState(double g)
    {
        // Source: stationarity of V_ss under exact propagation gives Q = V_ss − Φ V_ss Φᵀ
        // (PHYSICS.md "Numerics"); V_ss from the Lyapunov solver, which is tested on its own.
        // With the weak coupling the mechanics barely decays over the stage, so this subtraction
        // cancels and the comparison is made relative to ‖V_ss‖.
        const double kappa = 1.3e6;
        var (a, d) = Models.Optomechanics(kappa, gamma: 1.0, g, nCavity: 0.01, nMechanics: 1e3);
        double tau = 2000 / kappa;

        var disc = VanLoan.Discretize(a, d, tau);
        var vss = Lyapunov.SolveSteadyState(a, d);
        var expected = vss - disc.Phi * vss * disc.Phi.Transpose();

        Assert.All(disc.Phi.Enumerate(), x => Assert.True(double.IsFinite(x)));
        Assert.True((disc.Q - expected).FrobeniusNorm() <= 1e-10 * vss.FrobeniusNorm());
    }

    [Theory]
    [InlineData(0.5)]
    [InlineData(40.0)]
    public void LargeChainMatchesSteadyState(double tau)
    {
        // Source: stationarity of V_ss under exact propagation, Q = V_ss − Φ V_ss Φᵀ (PHYSICS.md "Numerics"), at n = 120 where
        // the blocked product, the block triangular exponential and the blocked doubling run; V_ss from the Lyapunov solver.
        var (a, d) = Models.Chain(60, uniformOccupancy: false);

        var disc = VanLoan.Discretize(a, d, tau);
        var vss = Lyapunov.SolveSteadyState(a, d);
        var expected = vss - disc.Phi * vss * disc.Phi.Transpose();

        Assert.Equal(disc.Q, disc.Q.Transpose());
        Assert.True((disc.Q - expected).FrobeniusNorm() <= 1e-11 * vss.FrobeniusNorm(), $"{(disc.Q - expected).FrobeniusNorm() / vss.FrobeniusNorm():G3}");
    }

    [Fact]
    public void ZeroStepIsIdentity()
    {
        // Source: Φ(0) = e^0 = I and the noise integral over an empty interval is 0.
        var (a, d, _) = CoupledCase(0);
        var disc = VanLoan.Discretize(a, d, 0.0);
        Assert.Equal(Matrix<double>.Build.DenseIdentity(4), disc.Phi);
        Assert.Equal(Matrix<double>.Build.Dense(4, 4), disc.Q);
    }

    [Fact]
    public void TinyStepIsFirstOrder()
    {
        // Source: Taylor expansion, Φ = I + Aτ + O(τ²), Q = Dτ + O(τ²).
        var (a, d, _) = CoupledCase(1);
        const double tau = 1e-14;
        var disc = VanLoan.Discretize(a, d, tau);
        Assert.True(Models.RelativeDifference(disc.Q, d * tau) < 1e-12);
        Assert.True((disc.Phi - Matrix<double>.Build.DenseIdentity(4) - a * tau).FrobeniusNorm() < 1e-15);
    }

    [Fact]
    public void BadInputNamesTheArgument()
    {
        var (a, d, _) = CoupledCase(0);
        Assert.Equal("tau", Assert.Throws<ArgumentOutOfRangeException>(() => VanLoan.Discretize(a, d, -1)).ParamName);
        Assert.Equal("tau", Assert.Throws<ArgumentOutOfRangeException>(() => VanLoan.Discretize(a, d, double.NaN)).ParamName);
        Assert.Equal("d", Assert.Throws<ArgumentException>(() => VanLoan.Discretize(a, Matrix<double>.Build.Dense(3, 3), 1)).ParamName);
        var asymmetric = d.Clone();
        asymmetric[0, 1] += 1;
        Assert.Equal("d", Assert.Throws<ArgumentException>(() => VanLoan.Discretize(a, asymmetric, 1)).ParamName);
    }

    /// <summary>
    /// 1 − e^{−x} without cancellation, as 2 sinh(x/2) e^{−x/2} for small x. (.NET's double.ExpM1
    /// is evaluated as Exp(x) − 1 and loses ~8 digits at x = 1e-9, so it cannot serve as a reference.)
    /// </summary>
    private static double OneMinusExp(double x) => x < 1 ? 2 * Math.Sinh(x / 2) * Math.Exp(-x / 2) : 1 - Math.Exp(-x);

    private static (Matrix<double> A, Matrix<double> D) DampedMode(double gamma, double n)
        => (Models.Drift(Matrix<double>.Build.Dense(2, 2), [gamma]), Models.Diffusion([gamma], [n]));

    /// <summary>Three 4×4 coupled cases, all non-normal (A Aᵀ ≠ Aᵀ A).</summary>
    internal static (Matrix<double> A, Matrix<double> D, double Tau) CoupledCase(int which)
    {
        switch (which)
        {
            case 0:
            {
                // Detuned cavity with radiation-pressure (x_a x_b) coupling to a mechanical mode.
                var h = Matrix<double>.Build.Dense(4, 4);
                Models.AddFrequency(h, 0, 1.0);
                Models.AddFrequency(h, 1, 1.5);
                h[0, 2] = h[2, 0] = 0.4;
                double[] rates = [2.0, 0.1];
                return (Models.Drift(h, rates), Models.Diffusion(rates, [0.3, 5.0]), 3.0);
            }
            case 1:
            {
                // Explicitly non-normal drift with a large shear, A = [[-1, 100], [0, -2]] type.
                var a = Matrix<double>.Build.DenseOfArray(new double[,]
                {
                    { -1, 100, 0, 0 },
                    { 0, -2, 0, 0 },
                    { 0.5, 0, -0.5, 3 },
                    { 0, 1, -3, -0.5 },
                });
                var d = Matrix<double>.Build.DenseOfDiagonalArray([1.0, 2.0, 0.5, 0.5]);
                d[0, 1] = d[1, 0] = 0.3;
                return (a, d, 0.05);
            }
            default:
            {
                // Unstable (two-mode squeezing beyond damping): propagation is still exact.
                var h = Matrix<double>.Build.Dense(4, 4);
                Models.AddCoupling(h, 0, 1, 0.8, -1);
                double[] rates = [1.0, 0.2];
                return (Models.Drift(h, rates), Models.Diffusion(rates, [0.0, 2.0]), 2.0);
            }
        }
    }

    /// <summary>Classical fourth-order Runge–Kutta on dV/dt = A V + V Aᵀ + D, on plain arrays.</summary>
    private static Matrix<double> IntegrateRk4(Matrix<double> a, Matrix<double> d, Matrix<double> v0, double tau, int steps)
    {
        int n = a.RowCount;
        double[,] am = a.ToArray(), dm = d.ToArray(), v = v0.ToArray();
        double h = tau / steps;
        var k1 = new double[n, n];
        var k2 = new double[n, n];
        var k3 = new double[n, n];
        var k4 = new double[n, n];
        var tmp = new double[n, n];

        void Rhs(double[,] x, double[,] result)
        {
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++)
                {
                    double s = dm[i, j];
                    for (int k = 0; k < n; k++) s += am[i, k] * x[k, j] + x[i, k] * am[j, k];
                    result[i, j] = s;
                }
            }
        }

        void Combine(double[,] x, double[,] k, double c, double[,] result)
        {
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++) result[i, j] = x[i, j] + c * k[i, j];
            }
        }

        for (int step = 0; step < steps; step++)
        {
            Rhs(v, k1);
            Combine(v, k1, h / 2, tmp);
            Rhs(tmp, k2);
            Combine(v, k2, h / 2, tmp);
            Rhs(tmp, k3);
            Combine(v, k3, h, tmp);
            Rhs(tmp, k4);
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++)
                {
                    v[i, j] += h / 6 * (k1[i, j] + 2 * k2[i, j] + 2 * k3[i, j] + k4[i, j]);
                }
            }
        }

        return Matrix<double>.Build.DenseOfArray(v);
    }
}

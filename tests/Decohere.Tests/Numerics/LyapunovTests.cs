using MathNet.Numerics.LinearAlgebra;
using Decohere.Numerics;

namespace Decohere.Tests.Numerics;

public class LyapunovTests
{
    private const double ResidualBound = 1e-10;

    public static TheoryData<string> Cases => new()
    {
        "rotating-damped-2", "nonnormal-2", "jordan-4", "coupled-4", "shear-4",
        "optomech-strong-4", "optomech-weak-4", "chain-80", "chain-80-uniform", "jordan-80",
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void ResidualIsSmallAndResultSymmetric(string name)
    {
        // Source: the defining equation A V + V Aᵀ + D = 0 (residual check, STYLE.md test kind 2).
        var (a, d) = Case(name);

        var solution = Lyapunov.Solve(a, d);

        Assert.True(solution.RelativeResidual <= ResidualBound, $"{name}: residual {solution.RelativeResidual:G3} by {solution.Method}");
        Assert.Equal(solution.RelativeResidual, Lyapunov.RelativeResidual(a, solution.Covariance, d));
        Assert.Equal(solution.Covariance, solution.Covariance.Transpose());
        Assert.NotEqual(LyapunovMethod.Automatic, solution.Method);
    }

    [Theory]
    [InlineData("coupled-4", LyapunovMethod.Kronecker)]
    [InlineData("coupled-4", LyapunovMethod.Eigendecomposition)]
    [InlineData("coupled-4", LyapunovMethod.SmithDoubling)]
    [InlineData("optomech-weak-4", LyapunovMethod.Eigendecomposition)]
    [InlineData("optomech-weak-4", LyapunovMethod.SmithDoubling)]
    [InlineData("jordan-4", LyapunovMethod.SmithDoubling)]
    [InlineData("chain-80", LyapunovMethod.Eigendecomposition)]
    [InlineData("chain-80", LyapunovMethod.SmithDoubling)]
    [InlineData("chain-20", LyapunovMethod.Kronecker)]
    [InlineData("chain-20", LyapunovMethod.Eigendecomposition)]
    public void EveryMethodMeetsTheResidualBound(string name, LyapunovMethod method)
    {
        // Source: the defining equation A V + V Aᵀ + D = 0, one algorithm at a time.
        var (a, d) = Case(name);
        var solution = Lyapunov.Solve(a, d, method);
        Assert.Equal(method, solution.Method);
        Assert.True(solution.RelativeResidual <= ResidualBound, $"{name}/{method}: residual {solution.RelativeResidual:G3}");
        Assert.Equal(solution.Covariance, solution.Covariance.Transpose());
    }

    [Theory]
    [InlineData("coupled-4")]
    [InlineData("optomech-weak-4")]
    [InlineData("chain-80")]
    public void IndependentMethodsAgree(string name)
    {
        // Source: agreement between independent algorithms (diagonalisation vs Smith doubling,
        // R. A. Smith, SIAM J. Appl. Math. 16, 198 (1968)).
        var (a, d) = Case(name);
        var eigen = Lyapunov.Solve(a, d, LyapunovMethod.Eigendecomposition).Covariance;
        var smith = Lyapunov.Solve(a, d, LyapunovMethod.SmithDoubling).Covariance;
        Assert.True(Models.RelativeDifference(eigen, smith) < 1e-9, $"{Models.RelativeDifference(eigen, smith):G3}");
    }

    [Theory]
    [InlineData(1.0, 0.0)]
    [InlineData(1.3e6, 0.01)]
    [InlineData(1e-3, 1e7)]
    public void DampedModeIsThermal(double gamma, double n)
    {
        // Source: −γ V + γ(n+½) I = 0 ⇒ V = (n+½) I, the thermal state of the bath.
        var a = Models.Drift(Matrix<double>.Build.Dense(2, 2), [gamma]);
        var d = Models.Diffusion([gamma], [n]);
        var v = Lyapunov.SolveSteadyState(a, d);
        Assert.True(Models.RelativeDifference(v, Matrix<double>.Build.DenseIdentity(2) * (n + 0.5)) <= 4e-16);
    }

    [Fact]
    public void PassiveChainWithEqualBathsIsThermal()
    {
        // Source: beam splitters and free rotation commute with Ω (passive), so A + Aᵀ = −Γ and
        // V = (n+½) I solves A V + V Aᵀ + D = 0 when every bath has the same n
        // (C. Weedbrook et al., Rev. Mod. Phys. 84, 621 (2012), §II: passive transformations preserve thermal states).
        var (a, d) = Case("chain-80-uniform");
        var v = Lyapunov.SolveSteadyState(a, d);
        Assert.True(Models.RelativeDifference(v, Matrix<double>.Build.DenseIdentity(80) * 3.5) < 1e-12);
    }

    [Fact]
    public void OptomechanicalCoolingMatchesWeakCouplingTheory()
    {
        // Source: for a beam-splitter coupling G (red-sideband frame) with κ ≫ G, γ the mechanical
        // occupancy is the rate-weighted average of the two baths
        // (F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007); I. Wilson-Rae et al., ibid. 093901):
        // n_m,final ≈ (γ n_m + Γ_opt n_c) / (γ + Γ_opt), Γ_opt = 4G²/κ, up to O(Γ_opt/κ).
        const double kappa = 1.3e6, gamma = 1.0, nc = 0.01, nm = 1e3;
        double g = 2 * Math.PI * 100;
        var (a, d) = Models.Optomechanics(kappa, gamma, g, nc, nm);
        var v = Lyapunov.SolveSteadyState(a, d);
        double gammaOpt = 4 * g * g / kappa;
        double expected = (gamma * nm + gammaOpt * nc) / (gamma + gammaOpt) + 0.5;
        Assert.True(Math.Abs(v[2, 2] - expected) < 1e-3 * expected, $"{v[2, 2]} vs {expected}");
    }

    [Fact]
    public void DefectiveLargeSystemFallsBackToSmith()
    {
        // Source: A = −I + N (one 80×80 Jordan block) has no eigenvector basis, so the
        // diagonal method must decline; the residual bound must still hold.
        var (a, d) = Case("jordan-80");
        var solution = Lyapunov.Solve(a, d);
        Assert.Equal(LyapunovMethod.SmithDoubling, solution.Method);
        Assert.NotEmpty(solution.Warnings);
        Assert.Throws<InvalidOperationException>(() => Lyapunov.Solve(a, d, LyapunovMethod.Eigendecomposition));
    }

    [Fact]
    public void TwoModeSqueezingBeyondDampingIsUnstable()
    {
        // Source: for H = G(x_a x_b − p_a p_b) the drift Ω H − γ/2 I has eigenvalues ±G − γ/2
        // (parametric amplification; A. A. Clerk et al., Rev. Mod. Phys. 82, 1155 (2010), §V),
        // so the amplitudes grow at G − γ/2.
        const double g = 3.0, gamma = 1.0;
        var h = Matrix<double>.Build.Dense(4, 4);
        Models.AddCoupling(h, 0, 1, g, -1);
        double[] rates = [gamma, gamma];
        var a = Models.Drift(h, rates);
        var d = Models.Diffusion(rates, [0.0, 0.0]);

        var ex = Assert.Throws<UnstableDynamicsException>(() => Lyapunov.SolveSteadyState(a, d));

        Assert.True(Math.Abs(ex.GrowthRate - (g - gamma / 2)) < 1e-12 * g, $"{ex.GrowthRate}");
        Assert.Contains("Re λ", ex.Message);
    }

    [Fact]
    public void UndampedModeIsNotStable()
    {
        // Source: a free oscillator, A = [[0, ω], [−ω, 0]], has Re λ = 0: no steady state.
        var a = Matrix<double>.Build.DenseOfArray(new double[,] { { 0, 5 }, { -5, 0 } });
        var ex = Assert.Throws<UnstableDynamicsException>(() => Lyapunov.SolveSteadyState(a, Matrix<double>.Build.DenseIdentity(2)));
        Assert.True(Math.Abs(ex.GrowthRate) < 1e-12);
    }

    [Fact]
    public void HighQModeWarnsAboutMarginalStability()
    {
        // Source: SciPy's solve_continuous_lyapunov practice of warning on λ_i + λ_j ≈ 0 (STYLE.md).
        var a = Matrix<double>.Build.DenseOfArray(new double[,] { { -1e-8, 1e4 }, { -1e4, -1e-8 } });
        var solution = Lyapunov.Solve(a, Matrix<double>.Build.DenseIdentity(2));
        Assert.Contains(solution.Warnings, w => w.Contains("marginal", StringComparison.OrdinalIgnoreCase));
    }

    [Fact]
    public void BadInputNamesTheArgument()
    {
        var (a, _) = Case("coupled-4");
        Assert.Equal("d", Assert.Throws<ArgumentException>(() => Lyapunov.SolveSteadyState(a, Matrix<double>.Build.Dense(2, 2))).ParamName);
        Assert.Equal("a", Assert.Throws<ArgumentException>(() => Lyapunov.SolveSteadyState(Matrix<double>.Build.Dense(2, 3), Matrix<double>.Build.Dense(2, 2))).ParamName);
    }

    internal static (Matrix<double> A, Matrix<double> D) Case(string name)
    {
        switch (name)
        {
            case "rotating-damped-2":
                return (Models.Drift(WithFrequency(1, 0, 7.0), [0.4]), Models.Diffusion([0.4], [2.0]));
            case "nonnormal-2":
                return (Matrix<double>.Build.DenseOfArray(new double[,] { { -1, 100 }, { 0, -2 } }),
                    Matrix<double>.Build.DenseOfArray(new double[,] { { 1, 0.2 }, { 0.2, 3 } }));
            case "jordan-4":
            {
                var a = Matrix<double>.Build.DenseOfArray(new double[,]
                {
                    { -1, 1, 0, 0 }, { 0, -1, 0, 0 }, { 0, 0, -2, 1 }, { 0, 0, 0, -2 },
                });
                a[0, 2] = 0.5;
                return (a, Matrix<double>.Build.DenseDiagonal(4, 4, 1.0));
            }
            case "coupled-4":
            {
                var (a, d, _) = VanLoanTests.CoupledCase(0);
                return (a, d);
            }
            case "shear-4":
            {
                var (a, d, _) = VanLoanTests.CoupledCase(1);
                return (a, d);
            }
            case "optomech-strong-4":
                return Models.Optomechanics(1.3e6, 1.0, 2 * Math.PI * 25e3, 0.01, 1e3);
            case "optomech-weak-4":
                return Models.Optomechanics(1.3e6, 1.0, 2 * Math.PI * 100, 0.01, 1e3);
            case "chain-80":
                return Models.Chain(40, uniformOccupancy: false);
            case "chain-20":
                return Models.Chain(10, uniformOccupancy: false);
            case "chain-80-uniform":
                return Models.Chain(40, uniformOccupancy: true);
            case "jordan-80":
            {
                var a = -Matrix<double>.Build.DenseIdentity(80);
                for (int i = 0; i + 1 < 80; i++) a[i, i + 1] = 1;
                return (a, Matrix<double>.Build.DenseIdentity(80));
            }
            default:
                throw new ArgumentOutOfRangeException(nameof(name), name, null);
        }
    }

    private static Matrix<double> WithFrequency(int modes, int j, double omega)
    {
        var h = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        Models.AddFrequency(h, j, omega);
        return h;
    }
}

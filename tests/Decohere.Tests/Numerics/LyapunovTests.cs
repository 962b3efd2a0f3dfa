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
    [InlineData(LyapunovMethod.Automatic)]
    [InlineData(LyapunovMethod.BartelsStewart)]
    [InlineData(LyapunovMethod.SmithDoubling)]
    public void OneOperatorServesManyDiffusionsOnManyThreads(LyapunovMethod method)
    {
        // A damped rotating mode, A = [[−γ/2, ω], [−ω, −γ/2]], with D = γ(n + ½)I has V = (n + ½)I for every ω (worked by
        // hand: A V + V Aᵀ = −γV for V ∝ I, since the rotation is antisymmetric). One factorisation serves every n, in parallel.
        double gamma = 0.37, omega = 5.1;
        var a = Matrix<double>.Build.DenseOfArray(new[,] { { -gamma / 2, omega }, { -omega, -gamma / 2 } });
        var drift = LyapunovOperator.Of(a, method);
        double[] occupancies = [.. Enumerable.Range(0, 64).Select(k => 0.01 * k * k)];
        var solved = new Matrix<double>[occupancies.Length];
        Parallel.For(0, occupancies.Length, k => solved[k] = drift.Solve(Matrix<double>.Build.DenseIdentity(2) * (gamma * (occupancies[k] + 0.5))).Covariance);
        for (int k = 0; k < occupancies.Length; k++)
        {
            var expected = Matrix<double>.Build.DenseIdentity(2) * (occupancies[k] + 0.5);
            Assert.True((solved[k] - expected).FrobeniusNorm() <= 1e-12 * (occupancies[k] + 0.5), $"n = {occupancies[k]}");
        }
        Assert.True(drift.Decays);
        Assert.Equal(-gamma / 2, drift.MaxRealPart, 1e-14);
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
    public void DefectiveLargeSystemIsSolvedWithoutEigenvectors()
    {
        // Source: A = −I + N (one 80×80 Jordan block) has no eigenvector basis, so the diagonal method must decline; the Schur
        // form needs none (it is orthogonal for any A), and Smith doubling, asked for, needs none either. The residual bound holds.
        var (a, d) = Case("jordan-80");
        var solution = Lyapunov.Solve(a, d);
        Assert.Equal(LyapunovMethod.BartelsStewart, solution.Method);
        Assert.True(solution.RelativeResidual <= ResidualBound, $"{solution.RelativeResidual:G3}");
        var smith = Lyapunov.Solve(a, d, LyapunovMethod.SmithDoubling);
        Assert.True(smith.RelativeResidual <= ResidualBound, $"{smith.RelativeResidual:G3}");
        Assert.True(Models.RelativeDifference(solution.Covariance, smith.Covariance) < 1e-9);
        Assert.Throws<InvalidOperationException>(() => Lyapunov.Solve(a, d, LyapunovMethod.Eigendecomposition));
    }

    [Theory]
    [InlineData(40)]
    [InlineData(81)]
    [InlineData(130)]
    [InlineData(200)]
    public void BartelsStewartResidualOnRandomStableMatrices(int n)
    {
        // Source: the defining equation, ‖A V + V Aᵀ + D‖_F / ‖D‖_F ≤ 1e-12, on A = R − (max Re λ(R) + 1) I with λ from MathNet's
        // eigensolver (so every eigenvalue has Re λ ≤ −1 and V is well conditioned) and a random positive definite D.
        var random = new Random(100 + n);
        var r = Models.RandomMatrix(random, n, n, 1.0 / Math.Sqrt(n));
        double shift = r.Evd(Symmetricity.Asymmetric).EigenValues.Max(e => e.Real) + 1;
        var a = r - shift * Matrix<double>.Build.DenseIdentity(n);
        var d = Models.RandomSpd(random, n);

        var solution = Lyapunov.Solve(a, d);

        Assert.Equal(LyapunovMethod.BartelsStewart, solution.Method);
        var v = solution.Covariance;
        double residual = (a * v + v * a.Transpose() + d).FrobeniusNorm() / d.FrobeniusNorm();
        Assert.True(residual <= 1e-12, $"n = {n}: {residual:G3}");
        Assert.Equal(v, v.Transpose());
        Assert.Empty(solution.Warnings);
    }

    [Theory]
    [InlineData(3)]
    [InlineData(17)]
    [InlineData(30)]
    public void BartelsStewartAgreesWithKronecker(int n)
    {
        // Source: agreement with the independent Kronecker (vech) solver, which shares no factorisation with the Schur path.
        var random = new Random(n);
        var r = Models.RandomMatrix(random, n, n, 1.0 / Math.Sqrt(n));
        double shift = r.Evd(Symmetricity.Asymmetric).EigenValues.Max(e => e.Real) + 0.5;
        var a = r - shift * Matrix<double>.Build.DenseIdentity(n);
        var d = Models.RandomSpd(random, n);

        var schur = Lyapunov.Solve(a, d, LyapunovMethod.BartelsStewart);
        var kronecker = Lyapunov.Solve(a, d, LyapunovMethod.Kronecker);

        Assert.Equal(LyapunovMethod.BartelsStewart, schur.Method);
        Assert.True(Models.RelativeDifference(schur.Covariance, kronecker.Covariance) < 1e-12,
            $"{Models.RelativeDifference(schur.Covariance, kronecker.Covariance):G3}");
    }

    [Theory]
    [InlineData("rotating-damped-2")]
    [InlineData("coupled-4")]
    [InlineData("optomech-strong-4")]
    [InlineData("chain-20")]
    public void ComplexPairsGoThroughTwoByTwoBlocks(string name)
    {
        // Source: every eigenvalue of these drifts is a complex pair (rotating frames, beam splitters), so the Schur form has only
        // 2×2 blocks; the Kronecker solver is the independent reference.
        var (a, d) = Case(name);
        var schur = Lyapunov.Solve(a, d, LyapunovMethod.BartelsStewart);
        var kronecker = Lyapunov.Solve(a, d, LyapunovMethod.Kronecker);
        Assert.True(Models.RelativeDifference(schur.Covariance, kronecker.Covariance) < 1e-11,
            $"{Models.RelativeDifference(schur.Covariance, kronecker.Covariance):G3}");
    }

    [Fact]
    public void RotatingDampedModeIsThermalThroughTwoByTwoBlock()
    {
        // Source: A = [[−γ/2, ω], [−ω, −γ/2]], D = γ(n+½) I gives V = (n+½) I (rotation commutes with the thermal state);
        // the Schur form of A is A itself, one 2×2 block with eigenvalues −γ/2 ± iω.
        const double gamma = 0.3, omega = 5.0, n = 1.5;
        var a = Matrix<double>.Build.DenseOfArray(new[,] { { -gamma / 2, omega }, { -omega, -gamma / 2 } });
        var d = Matrix<double>.Build.DenseIdentity(2) * (gamma * (n + 0.5));
        var v = Lyapunov.Solve(a, d, LyapunovMethod.BartelsStewart).Covariance;
        Assert.True(Models.RelativeDifference(v, Matrix<double>.Build.DenseIdentity(2) * (n + 0.5)) < 1e-14);
    }

    [Fact]
    public void NearMarginalHighQModesAreThermalAndWarned()
    {
        // Source: uncoupled modes with V_j = (n_j+½) I₂ exactly (as in DampedModeIsThermal), here 20 mechanical modes at
        // 5 MHz with γ = 2π·1 mHz (Q ≈ 5·10⁹), n = 40 so Automatic picks Bartels–Stewart. ‖A‖/min|Re λ| ≈ 10¹¹ trips the
        // near-marginal warning. Each 2×2 block is solved on its own, so the error stays at rounding relative to each mode's
        // ω/γ; allow that condition number times 10ε.
        const int modes = 20;
        double gamma = 2 * Math.PI * 1e-3;
        var h = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        var rates = new double[modes];
        var occupancies = new double[modes];
        for (int j = 0; j < modes; j++)
        {
            Models.AddFrequency(h, j, 2 * Math.PI * (5e6 + 1e3 * j));
            rates[j] = gamma;
            occupancies[j] = 10.0 * j;
        }

        var a = Models.Drift(h, rates);
        var d = Models.Diffusion(rates, occupancies);
        var expected = Matrix<double>.Build.DenseDiagonal(2 * modes, 2 * modes, i => occupancies[i / 2] + 0.5);

        var solution = Lyapunov.Solve(a, d);

        Assert.Equal(LyapunovMethod.BartelsStewart, solution.Method);
        Assert.Contains(solution.Warnings, w => w.Contains("marginal", StringComparison.Ordinal));
        double condition = 2 * Math.PI * 5.1e6 / gamma;
        double error = Models.RelativeDifference(solution.Covariance, expected);
        Assert.True(error < 10 * 2.2e-16 * condition, $"{error:G3} vs condition {condition:G3}");
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

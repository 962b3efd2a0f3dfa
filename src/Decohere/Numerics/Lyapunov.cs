using MathNet.Numerics.LinearAlgebra;

using Complex = System.Numerics.Complex;

namespace Decohere.Numerics;

/// <summary>Algorithm used for the continuous Lyapunov equation A V + V Aᵀ + D = 0.</summary>
public enum LyapunovMethod
{
    /// <summary>Kronecker form for n ≤ <see cref="Lyapunov.KroneckerMaxDimension"/>, else Bartels–Stewart, with Smith doubling as fallback.</summary>
    Automatic,

    /// <summary>Dense LU of the symmetric (vech) Kronecker form; O(n⁶), exact for small systems even when A is defective.</summary>
    Kronecker,

    /// <summary>Diagonalisation A = S Λ S⁻¹ (complex), X̃_ij = −D̃_ij / (λ_i + λ_j); O(n³), needs a well-conditioned S.</summary>
    Eigendecomposition,

    /// <summary>Smith's doubling on the exactly discretised system; O(n³ log(‖A‖ / min|Re λ|)), robust for non-normal A.</summary>
    SmithDoubling,

    /// <summary>Real Schur form A = Z T Zᵀ and back substitution on T Y + Y Tᵀ = −Zᵀ D Z; O(n³), backward stable, defective A included.</summary>
    BartelsStewart,
}

/// <summary>
/// Steady-state covariance with the diagnostics of how it was obtained.
/// </summary>
/// <param name="Covariance">V solving A V + V Aᵀ + D = 0 (symmetric).</param>
/// <param name="Method">The method that produced <paramref name="Covariance"/> (never Automatic).</param>
/// <param name="RelativeResidual">‖A V + V Aᵀ + D‖_F / (2‖A‖_F‖V‖_F + ‖D‖_F).</param>
/// <param name="RefinementSteps">Accepted steps of iterative refinement on the residual.</param>
/// <param name="SlowestDecayRate">min |Re λ(A)|, s⁻¹: the slowest relaxation rate of the amplitudes.</param>
/// <param name="Warnings">Recoverable numerical trouble, e.g. near-marginal stability or a fallback taken.</param>
public sealed record LyapunovSolution(
    Matrix<double> Covariance,
    LyapunovMethod Method,
    double RelativeResidual,
    int RefinementSteps,
    double SlowestDecayRate,
    IReadOnlyList<string> Warnings);

/// <summary>
/// Steady state of the Lyapunov equation dV/dt = A V + V Aᵀ + D.
/// </summary>
public static class Lyapunov
{
    /// <summary>Largest n for which Automatic uses the Kronecker form (n(n+1)/2 = 465 unknowns).</summary>
    public const int KroneckerMaxDimension = 30;

    /// <summary>
    /// Re λ ≥ −StabilityTolerance·‖A‖_F counts as not decaying: a backward-stable eigensolver returns the eigenvalues of
    /// A + E with ‖E‖ ~ ε‖A‖, so a decay slower than this is rounding noise.
    /// </summary>
    public const double StabilityTolerance = 1e-13;

    /// <summary>
    /// The one stability criterion of the project: every eigenvalue of the drift decays, max Re λ &lt; −<see cref="StabilityTolerance"/>·‖A‖_F.
    /// </summary>
    /// <param name="maxRealPart">max Re λ(A), s⁻¹.</param>
    /// <param name="driftNorm">‖A‖_F, s⁻¹.</param>
    public static bool Decays(double maxRealPart, double driftNorm) => maxRealPart < -StabilityTolerance * driftNorm;

    /// <summary>Eigenvalues of A from its real Schur form (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed. (2013), alg. 7.5.2), as the solver sees them.</summary>
    /// <exception cref="ArgumentException">A is not square or has entries that are not finite.</exception>
    public static IReadOnlyList<Complex> Eigenvalues(Matrix<double> a)
    {
        ArgumentNullException.ThrowIfNull(a);
        Validation.RequireSquareFinite(a, nameof(a));
        return LyapunovOperator.Of(a).Eigenvalues;
    }

    /// <summary>‖A‖_F, the norm <see cref="Decays"/> measures rounding against.</summary>
    public static double DriftNorm(Matrix<double> a)
    {
        ArgumentNullException.ThrowIfNull(a);
        return Validation.FrobeniusNorm(a);
    }

    /// <summary>
    /// V with A V + V Aᵀ + D = 0 (Kronecker form for small n; else R. H. Bartels and G. W. Stewart, Commun. ACM 15, 820 (1972), with Smith doubling, R. A. Smith, SIAM J. Appl. Math. 16, 198 (1968), as fallback).
    /// </summary>
    /// <param name="a">Drift matrix A (n×n), s⁻¹; every eigenvalue must have Re λ &lt; 0.</param>
    /// <param name="d">Diffusion matrix D (n×n, symmetric).</param>
    /// <returns>The symmetric steady-state covariance V (n×n).</returns>
    /// <exception cref="UnstableDynamicsException">Some eigenvalue of A has Re λ ≥ −1e-13·‖A‖_F; carries max Re λ.</exception>
    /// <exception cref="ArgumentException">Shapes differ, entries are not finite, or D is not symmetric.</exception>
    public static Matrix<double> SolveSteadyState(Matrix<double> a, Matrix<double> d) => Solve(a, d).Covariance;

    /// <summary>
    /// Steady state with diagnostics: <see cref="LyapunovOperator.Of"/> on A, then <see cref="LyapunovOperator.Solve"/> on D.
    /// Many diffusions with one drift share the operator instead.
    /// </summary>
    /// <param name="a">Drift matrix A (n×n), s⁻¹.</param>
    /// <param name="d">Diffusion matrix D (n×n, symmetric).</param>
    /// <param name="method">Algorithm; Automatic picks by size and falls back when the result is poor.</param>
    /// <exception cref="UnstableDynamicsException">Some eigenvalue of A has Re λ ≥ −1e-13·‖A‖_F.</exception>
    /// <exception cref="InvalidOperationException">The method asked for cannot factorise A (eigenvectors too ill-conditioned, or no Schur form).</exception>
    /// <exception cref="ArgumentException">Shapes differ, entries are not finite, or D is not symmetric.</exception>
    public static LyapunovSolution Solve(Matrix<double> a, Matrix<double> d, LyapunovMethod method = LyapunovMethod.Automatic)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(d);
        return LyapunovOperator.Of(a, method).Solve(d);
    }

    /// <summary>
    /// Normwise backward error ‖A V + V Aᵀ + D‖_F / (2‖A‖_F ‖V‖_F + ‖D‖_F) (N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM (2002), §16.2).
    /// </summary>
    /// <returns>The relative residual; 0 when all three matrices vanish.</returns>
    public static double RelativeResidual(Matrix<double> a, Matrix<double> v, Matrix<double> d)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(v);
        ArgumentNullException.ThrowIfNull(d);
        Validation.RequireSameSize(a, v, nameof(a), nameof(v));
        Validation.RequireSameSize(a, d, nameof(a), nameof(d));
        double numerator = Validation.FrobeniusNorm(DenseProduct.Product(a, v) + DenseProduct.Product(v, a, transposeY: true) + d);
        double denominator = 2 * Validation.FrobeniusNorm(a) * Validation.FrobeniusNorm(v) + Validation.FrobeniusNorm(d);
        return denominator == 0 ? 0 : numerator / denominator;
    }
}

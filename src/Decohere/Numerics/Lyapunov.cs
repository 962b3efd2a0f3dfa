using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;
using System.Globalization;

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

    // Solutions with a worse relative residual trigger the fallback; the contract is ≤ 1e-10.
    private const double AcceptableResidual = 1e-12;

    // Past this ‖A‖/min|Re λ| the steady state is so ill-conditioned that digits are visibly lost.
    private const double MarginalStabilityRatio = 1e10;

    // cond_F(S)/n above this: the eigenvector basis is too skewed for the diagonal solve.
    private const double EigenvectorConditionLimit = 1e6;

    private const int MaxRefinementSteps = 2;
    private const int MaxDoublings = 128;

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
        return TrySchur(a)?.Eigenvalues ?? [.. a.Evd(Symmetricity.Asymmetric).EigenValues];
    }

    /// <summary>The real Schur form, or null in the rare case that the QR iteration does not converge.</summary>
    private static RealSchur? TrySchur(Matrix<double> a)
    {
        try
        {
            return RealSchur.Decompose(a);
        }
        catch (InvalidOperationException)
        {
            return null;
        }
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
    /// Steady state with diagnostics; Kronecker form, Bartels–Stewart (R. H. Bartels and G. W. Stewart, Commun. ACM 15, 820 (1972)), diagonalisation, or Smith doubling (R. A. Smith, SIAM J. Appl. Math. 16, 198 (1968)).
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
        Validation.RequireSquareFinite(a, nameof(a));
        Validation.RequireSquareFinite(d, nameof(d));
        Validation.RequireSameSize(a, d, nameof(a), nameof(d));
        if (!Enum.IsDefined(method))
        {
            throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown Lyapunov method.");
        }

        Matrix<double> dSym = Validation.SymmetrisedDiffusion(d, nameof(d));
        int n = a.RowCount;
        var warnings = new List<string>();

        // The Schur form gives the eigenvalues for the stability check and is the factorisation Bartels–Stewart works on.
        RealSchur? schur = TrySchur(a);
        if (schur is null)
        {
            warnings.Add("The QR iteration for the real Schur form did not converge; eigenvalues from the general eigensolver, Bartels–Stewart unavailable.");
        }

        IEnumerable<Complex> eigenvalues = schur?.Eigenvalues ?? [.. a.Evd(Symmetricity.Asymmetric).EigenValues];
        double normA = Validation.FrobeniusNorm(a);
        double maxRe = double.NegativeInfinity;
        double minAbsRe = double.PositiveInfinity;
        foreach (Complex lambda in eigenvalues)
        {
            maxRe = Math.Max(maxRe, lambda.Real);
            minAbsRe = Math.Min(minAbsRe, Math.Abs(lambda.Real));
        }

        if (!Decays(maxRe, normA))
        {
            throw new UnstableDynamicsException(
                maxRe,
                string.Create(CultureInfo.InvariantCulture,
                    $"No steady state: the drift matrix has an eigenvalue with Re λ = {maxRe:G6} s⁻¹ ≥ 0 (to within {StabilityTolerance:G1}·‖A‖), so the covariance grows without bound."));
        }

        if (normA / minAbsRe > MarginalStabilityRatio)
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Nearly marginal stability: slowest decay rate {minAbsRe:G3} s⁻¹ against ‖A‖_F = {normA:G3} s⁻¹; about {Math.Log10(normA / minAbsRe):F0} digits of V may be lost."));
        }

        LyapunovMethod chosen = method == LyapunovMethod.Automatic
            ? (n <= KroneckerMaxDimension ? LyapunovMethod.Kronecker : schur is null ? LyapunovMethod.SmithDoubling : LyapunovMethod.BartelsStewart)
            : method;
        if (chosen == LyapunovMethod.BartelsStewart && schur is null)
        {
            throw new InvalidOperationException("The real Schur form of A could not be computed (QR iteration did not converge); use Automatic or SmithDoubling.");
        }

        Func<Matrix<double>, Matrix<double>>? solver = chosen switch
        {
            LyapunovMethod.Kronecker => KroneckerSolver(a),
            LyapunovMethod.Eigendecomposition => EigenSolver(a, a.Evd(Symmetricity.Asymmetric), warnings),
            LyapunovMethod.BartelsStewart => BartelsStewartSolver(schur!, warnings),
            _ => SmithSolver(a),
        };

        if (solver is null)
        {
            if (method == LyapunovMethod.Eigendecomposition)
            {
                throw new InvalidOperationException(
                    "The eigenvector matrix of A is too ill-conditioned for the eigendecomposition method; use Automatic or SmithDoubling.");
            }

            chosen = LyapunovMethod.SmithDoubling;
            solver = SmithSolver(a);
        }

        (Matrix<double> v, double residual, int steps) = SolveRefined(a, dSym, solver);
        if (method == LyapunovMethod.Automatic && chosen == LyapunovMethod.BartelsStewart && !(residual <= AcceptableResidual))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Bartels–Stewart residual {residual:G3} too large; fell back to Smith doubling."));
            chosen = LyapunovMethod.SmithDoubling;
            (v, residual, steps) = SolveRefined(a, dSym, SmithSolver(a));
        }

        if (!(residual <= AcceptableResidual))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Relative residual {residual:G3} exceeds {AcceptableResidual:G1}."));
        }

        return new LyapunovSolution(v, chosen, residual, steps, minAbsRe, warnings);
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
        double numerator = Validation.FrobeniusNorm(Product(a, v, false) + Product(v, a, true) + d);
        double denominator = 2 * Validation.FrobeniusNorm(a) * Validation.FrobeniusNorm(v) + Validation.FrobeniusNorm(d);
        return denominator == 0 ? 0 : numerator / denominator;
    }

    /// <summary>
    /// Solve, then correct with the same solver on the residual (iterative refinement, J. H. Wilkinson, Rounding Errors in Algebraic Processes (1963)).
    /// </summary>
    private static (Matrix<double> V, double Residual, int Steps) SolveRefined(
        Matrix<double> a, Matrix<double> d, Func<Matrix<double>, Matrix<double>> solver)
    {
        Matrix<double> v = solver(d);
        double residual = RelativeResidual(a, v, d);
        int steps = 0;
        for (int k = 0; k < MaxRefinementSteps && residual > 1e-15; k++)
        {
            // Residual in the exactly symmetric form A V + (A V)ᵀ + D, so the correction stays symmetric.
            Matrix<double> av = Product(a, v, false);
            Matrix<double> r = av + av.Transpose() + d;
            Matrix<double> candidate = Validation.Symmetrise(v + solver(r));
            double candidateResidual = RelativeResidual(a, candidate, d);
            if (!(candidateResidual < residual)) break;
            v = candidate;
            residual = candidateResidual;
            steps++;
        }

        return (v, residual, steps);
    }

    /// <summary>
    /// Solver for A X + X Aᵀ + R = 0 on the n(n+1)/2 unknowns of symmetric X: LU of (I ⊗ A + A ⊗ I) restricted to vech (R. Bellman, Introduction to Matrix Analysis (1960), ch. 12).
    /// </summary>
    private static Func<Matrix<double>, Matrix<double>> KroneckerSolver(Matrix<double> a)
    {
        int n = a.RowCount;
        int size = n * (n + 1) / 2;
        Matrix<double> op = Matrix<double>.Build.Dense(size, size);
        for (int i = 0; i < n; i++)
        {
            for (int j = i; j < n; j++)
            {
                int row = VechIndex(i, j, n);
                // (A X + X Aᵀ)_ij = Σ_m A_im X_mj + Σ_m A_jm X_im, with X_mj = X_jm folded onto vech.
                for (int m = 0; m < n; m++)
                {
                    op[row, VechIndex(m, j, n)] += a[i, m];
                    op[row, VechIndex(i, m, n)] += a[j, m];
                }
            }
        }

        LU<double> lu = op.LU();
        return r =>
        {
            Vector<double> rhs = Vector<double>.Build.Dense(size);
            for (int i = 0; i < n; i++)
            {
                for (int j = i; j < n; j++)
                {
                    rhs[VechIndex(i, j, n)] = -0.5 * (r[i, j] + r[j, i]);
                }
            }

            Vector<double> x = lu.Solve(rhs);
            Matrix<double> result = Matrix<double>.Build.Dense(n, n);
            for (int i = 0; i < n; i++)
            {
                for (int j = i; j < n; j++)
                {
                    double value = x[VechIndex(i, j, n)];
                    result[i, j] = value;
                    result[j, i] = value;
                }
            }

            return result;
        };
    }

    /// <summary>X Y or X Yᵀ, on the blocked product from <see cref="MatrixExponential.BlockedMinDimension"/> on.</summary>
    private static Matrix<double> Product(Matrix<double> x, Matrix<double> y, bool transposeY)
    {
        if (x.RowCount < MatrixExponential.BlockedMinDimension) return transposeY ? x.TransposeAndMultiply(y) : x * y;
        return DenseProduct.Multiply(x, y, transposeB: transposeY);
    }

    /// <summary>
    /// Solver via the real Schur form A = Z T Zᵀ: with Y = Zᵀ V Z, T Y + Y Tᵀ = −Zᵀ R Z is solved by back substitution over the
    /// diagonal blocks of T and V = Z Y Zᵀ (R. H. Bartels and G. W. Stewart, Commun. ACM 15, 820 (1972)).
    /// </summary>
    private static Func<Matrix<double>, Matrix<double>> BartelsStewartSolver(RealSchur schur, List<string> warnings)
    {
        int n = schur.N;
        Matrix<double> z = schur.ZMatrix();
        bool warned = false;
        return r =>
        {
            // C = −Zᵀ R Z, exactly symmetric; its column-major array is also the row-major one.
            Matrix<double> rz = DenseProduct.Multiply(r.Storage.IsDense ? r : Matrix<double>.Build.DenseOfMatrix(r), z);
            Matrix<double> c = Matrix<double>.Build.Dense(n, n);
            DenseProduct.MultiplyInto(-1.0, z, true, rz, false, 0.0, c);
            DenseProduct.MirrorUpper(c);
            int perturbed = QuasiTriangularLyapunov.Solve(schur.T, schur.BlockStarts, DenseProduct.Dense(c), n);
            if (perturbed > 0 && !warned)
            {
                warned = true;
                warnings.Add(string.Create(CultureInfo.InvariantCulture,
                    $"Bartels–Stewart: {perturbed} diagonal block system(s) nearly singular (λ_i + λ_j ≈ 0) and perturbed to ε·‖T‖."));
            }

            Matrix<double> zy = DenseProduct.Multiply(z, c);
            Matrix<double> v = DenseProduct.Multiply(zy, z, transposeB: true);
            DenseProduct.MirrorUpper(v);
            return v;
        };
    }

    private static int VechIndex(int i, int j, int n)
    {
        if (i > j) (i, j) = (j, i);
        return i * n - i * (i - 1) / 2 + (j - i);
    }

    /// <summary>
    /// Solver via A = S Λ S⁻¹: with V = S X Sᵀ and D̃ = S⁻¹ D S⁻ᵀ, X_ij = −D̃_ij / (λ_i + λ_j) (R. Bellman, Introduction to Matrix Analysis (1960), ch. 12); null if S is ill-conditioned.
    /// </summary>
    private static Func<Matrix<double>, Matrix<double>>? EigenSolver(
        Matrix<double> a, Evd<double> evd, List<string> warnings)
    {
        int n = a.RowCount;
        Vector<Complex> lambda = evd.EigenValues;
        Matrix<double> vr = evd.EigenVectors;
        Matrix<Complex> ac = a.ToComplex();
        Matrix<Complex> s = Matrix<Complex>.Build.Dense(n, n);

        for (int j = 0; j < n; j++)
        {
            if (lambda[j].Imaginary == 0)
            {
                for (int i = 0; i < n; i++) s[i, j] = vr[i, j];
                continue;
            }

            // A complex pair is stored as real and imaginary parts in columns j, j+1 (real Schur-style
            // output of the Hessenberg QR); the sign convention is checked rather than assumed.
            if (j + 1 >= n || lambda[j + 1] != Complex.Conjugate(lambda[j]))
            {
                return null;
            }

            Vector<Complex> plus = Vector<Complex>.Build.Dense(n, i => new Complex(vr[i, j], vr[i, j + 1]));
            Vector<Complex> minus = plus.Conjugate();
            double errPlus = (ac * plus - plus * lambda[j]).L2Norm();
            double errMinus = (ac * minus - minus * lambda[j]).L2Norm();
            Vector<Complex> first = errPlus <= errMinus ? plus : minus;
            s.SetColumn(j, first);
            s.SetColumn(j + 1, first.Conjugate());
            j++;
        }

        for (int j = 0; j < n; j++)
        {
            double norm = s.Column(j).L2Norm();
            if (!(norm > 0)) return null;
            s.SetColumn(j, s.Column(j) / norm);
        }

        double eigResidual = (ac * s - s * Matrix<Complex>.Build.DenseOfDiagonalVector(lambda)).FrobeniusNorm();
        if (!(eigResidual <= 1e-10 * Validation.FrobeniusNorm(a) * Math.Sqrt(n)))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Computed eigenvectors of A fail ‖A S − S Λ‖_F ≤ 1e-10·‖A‖_F·√n (got {eigResidual:G3}); used Smith doubling instead of diagonalisation."));
            return null;
        }

        LU<Complex> luS = s.LU();
        Matrix<Complex> sInv = luS.Inverse();
        double condition = s.FrobeniusNorm() * sInv.FrobeniusNorm() / n;
        if (!(condition <= EigenvectorConditionLimit))
        {
            warnings.Add(double.IsFinite(condition)
                ? string.Create(CultureInfo.InvariantCulture,
                    $"Eigenvector matrix of A has cond_F/n ≈ {condition:G3} (strongly non-normal A); used Smith doubling instead of diagonalisation.")
                : "Eigenvector matrix of A is numerically singular (defective A); used Smith doubling instead of diagonalisation.");
            return null;
        }

        Matrix<Complex> sInvT = sInv.Transpose();
        Matrix<Complex> sT = s.Transpose();
        return r =>
        {
            Matrix<Complex> rt = sInv * r.ToComplex() * sInvT;
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++)
                {
                    rt[i, j] = -rt[i, j] / (lambda[i] + lambda[j]);
                }
            }

            Matrix<double> x = (s * rt * sT).Real();
            return Validation.Symmetrise(x);
        };
    }

    /// <summary>
    /// Solver by Smith's doubling V = Σ_k Φ^k Q Φ^kᵀ on the exact discretisation over h = 1/‖A‖_1 (R. A. Smith, SIAM J. Appl. Math. 16, 198 (1968)).
    /// </summary>
    /// <remarks>
    /// The continuous steady state is the fixed point of V = Φ V Φᵀ + Q for any step, because the
    /// Van Loan discretisation is exact; doubling sums the series in log2(number of terms) products.
    /// The powers Φ^{2^k} are cached so refinement steps reuse them.
    /// </remarks>
    private static Func<Matrix<double>, Matrix<double>> SmithSolver(Matrix<double> a)
    {
        int n = a.RowCount;
        double h = 1.0 / a.L1Norm();
        var powers = new List<Matrix<double>>();
        Matrix<double> phi = MatrixExponential.Compute(a.Multiply(h));
        for (int k = 0; k < MaxDoublings; k++)
        {
            powers.Add(phi);
            Matrix<double> next = Product(phi, phi, false);
            // Tail after this term is Φ_{k+1} V Φ_{k+1}ᵀ, bounded by ‖Φ_{k+1}‖_F² ‖V‖.
            double tail = Validation.FrobeniusNorm(next);
            if (tail * tail <= 1e-18) break;
            phi = next;
        }

        return r =>
        {
            Matrix<double> rSym = Validation.Symmetrise(r);
            Matrix<double> v = VanLoan.Discretize(a, rSym, h).Q;
            foreach (Matrix<double> p in powers)
            {
                // Smith (1968) doubling: V_{k+1} = V_k + Φ^{2^k} V_k (Φ^{2^k})ᵀ.
                v = n < MatrixExponential.BlockedMinDimension
                    ? Validation.Symmetrise(v + p * v.TransposeAndMultiply(p))
                    : DenseProduct.Congruence(p, v, v);
            }

            return v;
        };
    }
}

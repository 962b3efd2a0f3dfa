using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;
using System.Globalization;

using Complex = System.Numerics.Complex;

namespace Decohere.Numerics;

/// <summary>
/// The drift's half of the Lyapunov equation A V + V Aᵀ + D = 0, the operator X ↦ A X + X Aᵀ, analysed and factorised once:
/// eigenvalues from the real Schur form, the method chosen for A, and that method's factorisation. Every diffusion D with
/// this drift (a bath-temperature sweep, the refinement steps of one solve) then costs one solve. Thread-safe: the
/// factorisation is built on the first <see cref="Solve"/> and shared.
/// </summary>
public sealed class LyapunovOperator
{
    // Solutions with a worse relative residual trigger the fallback; the contract is ≤ 1e-10.
    private const double AcceptableResidual = 1e-12;

    // Past this ‖A‖/min|Re λ| the steady state is so ill-conditioned that digits are visibly lost.
    private const double MarginalStabilityRatio = 1e10;

    // cond_F(S)/n above this: the eigenvector basis is too skewed for the diagonal solve.
    private const double EigenvectorConditionLimit = 1e6;

    private const int MaxRefinementSteps = 2;
    private const int MaxDoublings = 128;

    /// <summary>Solves A X + X Aᵀ + R = 0 for exactly symmetric column-major R, returning exactly symmetric X; may add warnings.</summary>
    private delegate double[] Solver(double[] r, List<string> warnings);

    private sealed record Factorised(LyapunovMethod Method, Solver Solve, string[] Warnings);

    private readonly Matrix<double> _a;
    private readonly double[] _drift;
    private readonly RealSchur? _schur;
    private readonly LyapunovMethod _method;
    private readonly string[] _warnings;
    private Factorised? _factorised;

    private LyapunovOperator(Matrix<double> a, LyapunovMethod method)
    {
        _a = a;
        _drift = a.ToColumnMajorArray();
        _method = method;
        N = a.RowCount;
        var warnings = new List<string>();
        // The Schur form gives the eigenvalues for the stability check and is the factorisation Bartels–Stewart works on.
        try
        {
            _schur = RealSchur.Decompose(a);
        }
        catch (InvalidOperationException)
        {
            warnings.Add("The QR iteration for the real Schur form did not converge; eigenvalues from the general eigensolver, Bartels–Stewart unavailable.");
        }

        Eigenvalues = _schur?.Eigenvalues ?? [.. a.Evd(Symmetricity.Asymmetric).EigenValues];
        DriftNorm = Validation.FrobeniusNorm(_drift);
        MaxRealPart = double.NegativeInfinity;
        SlowestDecayRate = double.PositiveInfinity;
        foreach (Complex lambda in Eigenvalues)
        {
            MaxRealPart = Math.Max(MaxRealPart, lambda.Real);
            SlowestDecayRate = Math.Min(SlowestDecayRate, Math.Abs(lambda.Real));
        }

        if (Decays && DriftNorm / SlowestDecayRate > MarginalStabilityRatio)
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Nearly marginal stability: slowest decay rate {SlowestDecayRate:G3} s⁻¹ against ‖A‖_F = {DriftNorm:G3} s⁻¹; about {Math.Log10(DriftNorm / SlowestDecayRate):F0} digits of V may be lost."));
        }

        _warnings = [.. warnings];
    }

    /// <summary>Analyses the drift A (n×n, s⁻¹): its eigenvalues now, the factorisation for <paramref name="method"/> on the first solve.</summary>
    /// <exception cref="ArgumentException">A is not square or has entries that are not finite, or the method is unknown.</exception>
    public static LyapunovOperator Of(Matrix<double> a, LyapunovMethod method = LyapunovMethod.Automatic)
    {
        ArgumentNullException.ThrowIfNull(a);
        Validation.RequireSquareFinite(a, nameof(a));
        if (!Enum.IsDefined(method))
        {
            throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown Lyapunov method.");
        }

        return new LyapunovOperator(a, method);
    }

    /// <summary>Dimension n.</summary>
    public int N { get; }

    /// <summary>Eigenvalues of A, from its real Schur form (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed. (2013), alg. 7.5.2).</summary>
    public IReadOnlyList<Complex> Eigenvalues { get; }

    /// <summary>‖A‖_F, s⁻¹.</summary>
    public double DriftNorm { get; }

    /// <summary>max Re λ(A), s⁻¹.</summary>
    public double MaxRealPart { get; }

    /// <summary>min |Re λ(A)|, s⁻¹.</summary>
    public double SlowestDecayRate { get; }

    /// <summary>Whether A has a steady state, by <see cref="Lyapunov.Decays"/>.</summary>
    public bool Decays => Lyapunov.Decays(MaxRealPart, DriftNorm);

    /// <summary>
    /// V with A V + V Aᵀ + D = 0, refined on its residual: Kronecker form for small n, else R. H. Bartels and G. W. Stewart,
    /// Commun. ACM 15, 820 (1972), with Smith doubling (R. A. Smith, SIAM J. Appl. Math. 16, 198 (1968)) as fallback.
    /// </summary>
    /// <param name="d">Diffusion matrix D (n×n, symmetric).</param>
    /// <exception cref="UnstableDynamicsException">Some eigenvalue of A has Re λ ≥ −1e-13·‖A‖_F.</exception>
    /// <exception cref="InvalidOperationException">The method asked for cannot factorise A (eigenvectors too ill-conditioned, or no Schur form).</exception>
    /// <exception cref="ArgumentException">D has another size, entries that are not finite, or is not symmetric.</exception>
    public LyapunovSolution Solve(Matrix<double> d)
    {
        ArgumentNullException.ThrowIfNull(d);
        Validation.RequireSquareFinite(d, nameof(d));
        Validation.RequireSameSize(_a, d, "a", nameof(d));
        double[] dSym = Validation.SymmetrisedDiffusion(d.AsColumnMajorArray() ?? d.ToColumnMajorArray(), N, nameof(d));
        if (!Decays)
        {
            throw new UnstableDynamicsException(
                MaxRealPart,
                string.Create(CultureInfo.InvariantCulture,
                    $"No steady state: the drift matrix has an eigenvalue with Re λ = {MaxRealPart:G6} s⁻¹ ≥ 0 (to within {Lyapunov.StabilityTolerance:G1}·‖A‖), so the covariance grows without bound."));
        }

        var factorised = _factorised ??= Factorise();
        var warnings = new List<string>(_warnings);
        warnings.AddRange(factorised.Warnings);
        LyapunovMethod chosen = factorised.Method;
        (double[] v, double residual, int steps) = SolveRefined(dSym, factorised.Solve, warnings);
        if (_method == LyapunovMethod.Automatic && chosen == LyapunovMethod.BartelsStewart && !(residual <= AcceptableResidual))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Bartels–Stewart residual {residual:G3} too large; fell back to Smith doubling."));
            chosen = LyapunovMethod.SmithDoubling;
            (v, residual, steps) = SolveRefined(dSym, SmithSolver(), warnings);
        }

        if (!(residual <= AcceptableResidual))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture,
                $"Relative residual {residual:G3} exceeds {AcceptableResidual:G1}."));
        }

        return new LyapunovSolution(Matrix<double>.Build.Dense(N, N, v), chosen, residual, steps, SlowestDecayRate, warnings);
    }

    // A race builds the same factorisation twice; either copy serves.
    private Factorised Factorise()
    {
        var warnings = new List<string>();
        LyapunovMethod chosen = _method == LyapunovMethod.Automatic
            ? (N <= Lyapunov.KroneckerMaxDimension ? LyapunovMethod.Kronecker : _schur is null ? LyapunovMethod.SmithDoubling : LyapunovMethod.BartelsStewart)
            : _method;
        if (chosen == LyapunovMethod.BartelsStewart && _schur is null)
        {
            throw new InvalidOperationException("The real Schur form of A could not be computed (QR iteration did not converge); use Automatic or SmithDoubling.");
        }

        Solver? solver = chosen switch
        {
            LyapunovMethod.Kronecker => KroneckerSolver(),
            LyapunovMethod.Eigendecomposition => EigenSolver(_a.Evd(Symmetricity.Asymmetric), warnings),
            LyapunovMethod.BartelsStewart => BartelsStewartSolver(_schur!),
            _ => SmithSolver(),
        };

        if (solver is null)
        {
            if (_method == LyapunovMethod.Eigendecomposition)
            {
                throw new InvalidOperationException(
                    "The eigenvector matrix of A is too ill-conditioned for the eigendecomposition method; use Automatic or SmithDoubling.");
            }

            chosen = LyapunovMethod.SmithDoubling;
            solver = SmithSolver();
        }

        return new Factorised(chosen, solver, [.. warnings]);
    }

    /// <summary>
    /// Solve, then correct with the same solver on the residual R = A V + (A V)ᵀ + D, exactly symmetric so the correction
    /// stays symmetric (iterative refinement, J. H. Wilkinson, Rounding Errors in Algebraic Processes (1963)).
    /// </summary>
    private (double[] V, double Residual, int Steps) SolveRefined(double[] d, Solver solver, List<string> warnings)
    {
        double normD = Validation.FrobeniusNorm(d);
        double[] v = solver(d, warnings);
        double[] r = Residual(v, d);
        double residual = Relative(r, v, normD);
        int steps = 0;
        for (int k = 0; k < MaxRefinementSteps && residual > 1e-15; k++)
        {
            double[] correction = solver(r, warnings);
            double[] candidate = new double[v.Length];
            for (int i = 0; i < v.Length; i++) candidate[i] = v[i] + correction[i];
            double[] candidateR = Residual(candidate, d);
            double candidateResidual = Relative(candidateR, candidate, normD);
            if (!(candidateResidual < residual)) break;
            (v, r, residual) = (candidate, candidateR, candidateResidual);
            steps++;
        }

        return (v, residual, steps);
    }

    /// <summary>A V + (A V)ᵀ + D for symmetric V and D.</summary>
    private double[] Residual(double[] v, double[] d)
    {
        int n = N;
        double[] r = new double[n * n];
        if (n < MatrixExponential.BlockedMinDimension)
        {
            for (int j = 0; j < n; j++)
            {
                for (int k = 0; k < n; k++)
                {
                    double x = v[k + j * n];
                    for (int i = 0; i < n; i++) r[i + j * n] += _drift[i + k * n] * x;
                }
            }
        }
        else
        {
            DenseProduct.Multiply(n, n, n, 1.0, _drift, 0, n, false, v, 0, n, false, 0.0, r, 0, n);
        }

        // A V becomes A V + (A V)ᵀ + D in place, both triangles from the same sum.
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i <= j; i++) r[i + j * n] = r[j + i * n] = r[i + j * n] + r[j + i * n] + d[i + j * n];
        }

        return r;
    }

    /// <summary>‖R‖_F / (2‖A‖_F ‖V‖_F + ‖D‖_F) (N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM (2002), §16.2).</summary>
    private double Relative(double[] r, double[] v, double normD)
    {
        double denominator = 2 * DriftNorm * Validation.FrobeniusNorm(v) + normD;
        return denominator == 0 ? 0 : Validation.FrobeniusNorm(r) / denominator;
    }

    /// <summary>
    /// Solver for A X + X Aᵀ + R = 0 on the n(n+1)/2 unknowns of symmetric X: LU of (I ⊗ A + A ⊗ I) restricted to vech (R. Bellman, Introduction to Matrix Analysis (1960), ch. 12).
    /// </summary>
    private Solver? KroneckerSolver()
    {
        int n = N;
        int size = n * (n + 1) / 2;
        double[] op = new double[size * size];
        for (int i = 0; i < n; i++)
        {
            for (int j = i; j < n; j++)
            {
                int row = VechIndex(i, j, n);
                // (A X + X Aᵀ)_ij = Σ_m A_im X_mj + Σ_m A_jm X_im, with X_mj = X_jm folded onto vech.
                for (int m = 0; m < n; m++)
                {
                    op[row + VechIndex(m, j, n) * size] += _drift[i + m * n];
                    op[row + VechIndex(i, m, n) * size] += _drift[j + m * n];
                }
            }
        }

        DenseLU lu;
        try
        {
            lu = DenseLU.Factor(op, size);
        }
        catch (InvalidOperationException)
        {
            return null;   // λ_i + λ_j = 0 exactly: not for a decaying A, but never a division by zero
        }

        return (r, _) =>
        {
            double[] x = new double[size];
            for (int j = 0; j < n; j++)
            {
                for (int i = 0; i <= j; i++) x[VechIndex(i, j, n)] = -r[i + j * n];
            }

            lu.SolveInPlace(x, 1);
            double[] result = new double[n * n];
            for (int j = 0; j < n; j++)
            {
                for (int i = 0; i <= j; i++) result[i + j * n] = result[j + i * n] = x[VechIndex(i, j, n)];
            }

            return result;
        };
    }

    private static int VechIndex(int i, int j, int n)
    {
        if (i > j) (i, j) = (j, i);
        return i * n - i * (i - 1) / 2 + (j - i);
    }

    /// <summary>
    /// Solver via the real Schur form A = Z T Zᵀ: with Y = Zᵀ V Z, T Y + Y Tᵀ = −Zᵀ R Z is solved by back substitution over the
    /// diagonal blocks of T and V = Z Y Zᵀ (R. H. Bartels and G. W. Stewart, Commun. ACM 15, 820 (1972)).
    /// </summary>
    private static Solver BartelsStewartSolver(RealSchur schur)
    {
        int n = schur.N;
        double[] z = schur.Z;
        return (r, warnings) =>
        {
            // C = −Zᵀ R Z, exactly symmetric; its column-major array is also the row-major one.
            double[] rz = new double[n * n];
            DenseProduct.Multiply(n, n, n, 1.0, r, 0, n, false, z, 0, n, false, 0.0, rz, 0, n);
            double[] c = new double[n * n];
            DenseProduct.Multiply(n, n, n, -1.0, z, 0, n, true, rz, 0, n, false, 0.0, c, 0, n);
            DenseProduct.MirrorUpper(c, n);
            int perturbed = QuasiTriangularLyapunov.Solve(schur.T, schur.BlockStarts, c, n);
            if (perturbed > 0)
            {
                string warning = string.Create(CultureInfo.InvariantCulture,
                    $"Bartels–Stewart: {perturbed} diagonal block system(s) nearly singular (λ_i + λ_j ≈ 0) and perturbed to ε·‖T‖.");
                if (!warnings.Contains(warning)) warnings.Add(warning);
            }

            double[] zy = new double[n * n];
            DenseProduct.Multiply(n, n, n, 1.0, z, 0, n, false, c, 0, n, false, 0.0, zy, 0, n);
            double[] v = new double[n * n];
            DenseProduct.Multiply(n, n, n, 1.0, zy, 0, n, false, z, 0, n, true, 0.0, v, 0, n);
            DenseProduct.MirrorUpper(v, n);
            return v;
        };
    }

    /// <summary>
    /// Solver via A = S Λ S⁻¹: with V = S X Sᵀ and D̃ = S⁻¹ D S⁻ᵀ, X_ij = −D̃_ij / (λ_i + λ_j) (R. Bellman, Introduction to Matrix Analysis (1960), ch. 12); null if S is ill-conditioned.
    /// </summary>
    private Solver? EigenSolver(Evd<double> evd, List<string> warnings)
    {
        int n = N;
        Matrix<double> a = _a;
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
        if (!(eigResidual <= 1e-10 * DriftNorm * Math.Sqrt(n)))
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
        return (r, _) =>
        {
            Matrix<Complex> rt = sInv * Matrix<double>.Build.Dense(n, n, r).ToComplex() * sInvT;
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++)
                {
                    rt[i, j] = -rt[i, j] / (lambda[i] + lambda[j]);
                }
            }

            Matrix<double> x = (s * rt * sT).Real();
            return Validation.Symmetrise(x).ToColumnMajorArray();
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
    private Solver SmithSolver()
    {
        int n = N;
        Matrix<double> a = _a;
        double h = 1.0 / a.L1Norm();
        var powers = new List<Matrix<double>>();
        Matrix<double> phi = MatrixExponential.Compute(a.Multiply(h));
        for (int k = 0; k < MaxDoublings; k++)
        {
            powers.Add(phi);
            Matrix<double> next = DenseProduct.Product(phi, phi);
            // Tail after this term is Φ_{k+1} V Φ_{k+1}ᵀ, bounded by ‖Φ_{k+1}‖_F² ‖V‖.
            double tail = Validation.FrobeniusNorm(next);
            if (tail * tail <= 1e-18) break;
            phi = next;
        }

        return (r, _) =>
        {
            Matrix<double> v = VanLoan.Discretize(a, Matrix<double>.Build.Dense(n, n, r), h).Q;
            foreach (Matrix<double> p in powers)
            {
                // Smith (1968) doubling: V_{k+1} = V_k + Φ^{2^k} V_k (Φ^{2^k})ᵀ.
                v = n < MatrixExponential.BlockedMinDimension
                    ? Validation.Symmetrise(v + p * v.TransposeAndMultiply(p))
                    : DenseProduct.Congruence(p, v, v);
            }

            return v.ToColumnMajorArray();
        };
    }
}

using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Numerics;

/// <summary>
/// Exact discretisation of the linear stochastic system dR = A R dt + noise of diffusion D over one
/// step τ: Phi = e^{Aτ}, Q = ∫_0^τ e^{As} D e^{Aᵀs} ds, so that V(t+τ) = Phi V(t) Phiᵀ + Q and
/// μ(t+τ) = Phi μ(t) with no truncation error (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)).
/// </summary>
/// <param name="Phi">State transition matrix e^{Aτ} (n×n).</param>
/// <param name="Q">Accumulated noise covariance over the step (n×n, symmetric).</param>
/// <param name="Step">The step τ in seconds.</param>
public sealed record Discretization(Matrix<double> Phi, Matrix<double> Q, double Step)
{
    /// <summary>Dimension n of the phase space.</summary>
    public int Dimension => Phi.RowCount;
}

/// <summary>
/// Van Loan's block-exponential discretisation, made safe for stiff stages by composing short steps.
/// </summary>
public static class VanLoan
{
    // Beyond 2^1100 any finite ||A||·τ is covered; the cap only guards against a runaway loop.
    private const int MaxHalvings = 1100;

    /// <summary>
    /// (Phi, Q) over τ from the block exponential of [[−A, D],[0, Aᵀ]]·dt (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)), composed over τ = 2^m·dt.
    /// </summary>
    /// <remarks>
    /// The block exponential's (1,1) block is e^{−A dt}, which overflows for a fast damped mode
    /// (κτ ~ 10³ gives e^{κτ/2}). So dt = τ / 2^m is chosen with ||A||_1·dt ≤ 1, the block
    /// exponential is taken on dt, and the step is doubled m times with
    /// (Phi, Q)∘(Phi, Q) = (Phi², Phi Q Phiᵀ + Q), which is exact and involves only decaying factors.
    /// D is rescaled to the norm of A inside the block (Q is linear in D) so that the scaling
    /// decision of the matrix exponential is driven by the dynamics, not by the noise level.
    /// </remarks>
    /// <param name="a">Drift matrix A (n×n), s⁻¹.</param>
    /// <param name="d">Diffusion matrix D (n×n, symmetric), in quanta·s⁻¹.</param>
    /// <param name="tau">Step τ ≥ 0 in seconds. τ = 0 gives (I, 0).</param>
    /// <exception cref="ArgumentException">Shapes differ, entries are not finite, D is not symmetric.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="tau"/> is negative or not finite.</exception>
    public static Discretization Discretize(Matrix<double> a, Matrix<double> d, double tau)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(d);
        Validation.RequireSquareFinite(a, nameof(a));
        Validation.RequireSquareFinite(d, nameof(d));
        Validation.RequireSameSize(a, d, nameof(a), nameof(d));
        if (!double.IsFinite(tau) || tau < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(tau), tau, "tau must be finite and ≥ 0 (seconds).");
        }

        int n = a.RowCount;
        Matrix<double> dSym = Validation.SymmetrisedDiffusion(d, nameof(d));
        if (tau == 0)
        {
            return new Discretization(
                Matrix<double>.Build.DenseIdentity(n), Matrix<double>.Build.Dense(n, n), 0.0);
        }

        double normA = a.L1Norm();
        double normD = dSym.L1Norm();
        int m = HalvingsFor(normA * tau);
        double dt = Math.ScaleB(tau, -m);

        // Q is linear in D: run the block exponential with c·D of the size of A, divide Q by c after.
        double c = 1.0;
        if (normD > 0)
        {
            c = normA > 0 ? normA / normD : 1.0 / (normD * dt);
        }

        (Matrix<double> phi, Matrix<double> q) = BlockStep(a, dSym.Multiply(c), dt);
        q = q.Multiply(1.0 / c);

        bool blocked = n >= MatrixExponential.BlockedMinDimension;
        for (int k = 0; k < m; k++)
        {
            // Semigroup property of the exact discretisation: (Phi, Q)∘(Phi, Q) = (Phi², Phi Q Phiᵀ + Q).
            if (blocked)
            {
                q = DenseProduct.Congruence(phi, q, q);
                phi = DenseProduct.Multiply(phi, phi);
            }
            else
            {
                q = Validation.Symmetrise(phi.Multiply(q).TransposeAndMultiply(phi) + q);
                phi = phi.Multiply(phi);
            }
        }

        return new Discretization(phi, q, tau);
    }

    /// <summary>Number of halvings m ≥ 0 with x / 2^m ≤ 1.</summary>
    internal static int HalvingsFor(double x)
    {
        if (!(x > 1)) return 0;
        int m = (int)Math.Ceiling(Math.Log2(x));
        // Log2 is not correctly rounded; make the bound hold exactly.
        while (Math.ScaleB(x, -m) > 1) m++;
        return Math.Min(m, MaxHalvings);
    }

    /// <summary>
    /// One short step: Phi = F22ᵀ, Q = F22ᵀ F12 from F = exp([[−A, D],[0, Aᵀ]]·dt) (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978), Theorem 1).
    /// </summary>
    /// <remarks>
    /// The exponential is taken in block triangular form (four n×n products per block product instead of eight at 2n), and
    /// F11 = e^{−A dt}, which Theorem 1 does not use, is not solved for.
    /// </remarks>
    private static (Matrix<double> Phi, Matrix<double> Q) BlockStep(Matrix<double> a, Matrix<double> d, double dt)
    {
        int n = a.RowCount;
        (_, Matrix<double> f12, Matrix<double> f22) = MatrixExponential.ComputeBlockTriangular(
            a.Multiply(-dt), d.Multiply(dt), a.Transpose().Multiply(dt), wantF11: false);
        // Van Loan (1978), Theorem 1: F22 = e^{Aᵀdt}, F12 = ∫ e^{−A(dt−s)} D e^{Aᵀs} ds, so Q = F22ᵀ F12.
        Matrix<double> phi = f22.Transpose();
        if (n < MatrixExponential.BlockedMinDimension)
        {
            return (phi, Validation.Symmetrise(phi.Multiply(f12)));
        }

        Matrix<double> q = DenseProduct.Multiply(f22, f12, transposeA: true);
        return (phi, Validation.Symmetrise(q));
    }
}

using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Numerics;

/// <summary>
/// Matrix exponential e^A of a real square matrix.
/// </summary>
/// <remarks>
/// Reference: N. J. Higham, "The scaling and squaring method for the matrix exponential revisited",
/// SIAM J. Matrix Anal. Appl. 26, 1179 (2005), doi:10.1137/04061101X.
/// The later refinement by Al-Mohy and Higham (SIAM J. Matrix Anal. Appl. 31, 970 (2009)), which
/// avoids overscaling of strongly non-normal matrices, is not used: the Van Loan discretisation
/// keeps ||A||·dt ≲ 1, where the 2005 algorithm already needs no scaling at all.
/// </remarks>
public static class MatrixExponential
{
    // Table 2.3 of Higham (2005): largest 1-norm for which the [m/m] Padé approximant
    // attains unit roundoff 2^-53 in backward error.
    private const double Theta3 = 1.495585217958292e-2;
    private const double Theta5 = 2.539398330063230e-1;
    private const double Theta7 = 9.504178996162932e-1;
    private const double Theta9 = 2.097847961257068e0;
    private const double Theta13 = 5.371920351148152e0;

    // Padé coefficients b_j of p_m(x) = Σ b_j x^j (Higham 2005, eq. 2.2 and Fig. 2.1).
    private static readonly double[] B3 = [120, 60, 12, 1];
    private static readonly double[] B5 = [30240, 15120, 3360, 420, 30, 1];
    private static readonly double[] B7 = [17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1];
    private static readonly double[] B9 =
        [17643225600, 8821612800, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1];
    private static readonly double[] B13 =
    [
        64764752532480000, 32382376266240000, 7771770303897600, 1187353796428800,
        129060195264000, 10559470521600, 670442572800, 33522128640, 1323241920,
        40840800, 960960, 16380, 182, 1,
    ];

    /// <summary>
    /// e^A by scaling and squaring with Padé [m/m], m ∈ {3, 5, 7, 9, 13} (N. J. Higham, SIAM J. Matrix Anal. Appl. 26, 1179 (2005), Algorithm 2.3).
    /// </summary>
    /// <param name="a">Real square matrix with finite entries (n×n, n ≥ 1).</param>
    /// <returns>A new n×n matrix e^A.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="a"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="a"/> is not square, empty, or has NaN/∞ entries.</exception>
    public static Matrix<double> Compute(Matrix<double> a)
    {
        ArgumentNullException.ThrowIfNull(a);
        Validation.RequireSquareFinite(a, nameof(a));

        int n = a.RowCount;
        if (n == 1)
        {
            return Matrix<double>.Build.Dense(1, 1, Math.Exp(a[0, 0]));
        }

        if (a.L1Norm() == 0)
        {
            return Matrix<double>.Build.DenseIdentity(n);
        }

        return ScalingAndSquaring(new DenseAlgebra(n), a.Storage.IsDense ? a : Matrix<double>.Build.DenseOfMatrix(a));
    }

    /// <summary>
    /// The blocks F₁₂, F₂₂ (and F₁₁ when asked) of exp([[X₁₁, X₁₂], [0, X₂₂]]) for n×n blocks, by the same algorithm as
    /// <see cref="Compute"/> carried out on block upper triangular matrices, which every polynomial and Padé approximant of one is
    /// (N. J. Higham, Functions of Matrices, SIAM (2008), Thm. 1.13); half the multiply-adds of the dense 2n×2n evaluation.
    /// </summary>
    internal static (Matrix<double>? F11, Matrix<double> F12, Matrix<double> F22) ComputeBlockTriangular(
        Matrix<double> x11, Matrix<double> x12, Matrix<double> x22, bool wantF11)
    {
        var algebra = new BlockAlgebra(x11.RowCount, wantF11);
        var f = ScalingAndSquaring(algebra, new Block(x11, x12, x22));
        return (f.X11, f.X12, f.X22!);
    }

    private static T ScalingAndSquaring<T>(Algebra<T> algebra, T a)
        where T : class
    {
        double norm = algebra.Norm1(a);
        if (norm == 0)
        {
            return algebra.Identity();
        }

        // Algorithm 2.3 of Higham (2005), first branch: low degrees need no scaling.
        if (norm <= Theta3) return PadeLow(algebra, a, B3);
        if (norm <= Theta5) return PadeLow(algebra, a, B5);
        if (norm <= Theta7) return PadeLow(algebra, a, B7);
        if (norm <= Theta9) return PadeLow(algebra, a, B9);

        // Algorithm 2.3, second branch: s = ceil(log2(||A||_1 / θ13)), A <- A / 2^s.
        int s = Math.Max(0, (int)Math.Ceiling(Math.Log2(norm / Theta13)));
        T scaled = s == 0 ? a : algebra.Combine(0, (Math.ScaleB(1.0, -s), a));
        algebra.Squarings = s;
        T r = Pade13(algebra, scaled);
        // Undo the scaling: e^A = (r13(A / 2^s))^(2^s).
        for (int k = 0; k < s; k++)
        {
            r = algebra.Multiply(r, r);
        }

        return r;
    }

    /// <summary>
    /// Padé [m/m] approximant r_m(A) = q_m(A)^{-1} p_m(A) for m ≤ 9 (Higham 2005, eqs. 2.2 and 3.4).
    /// </summary>
    private static T PadeLow<T>(Algebra<T> algebra, T a, double[] b)
        where T : class
    {
        T a2 = algebra.Multiply(a, a);
        // Split p_m(A) = U + V into odd (U) and even (V) parts, Higham (2005) eq. (3.4).
        var uTerms = new List<(double, T)>();
        var vTerms = new List<(double, T)>();
        T power = a2;
        for (int j = 2; j < b.Length; j += 2)
        {
            if (j > 2) power = algebra.Multiply(power, a2);
            uTerms.Add((b[j + 1], power));
            vTerms.Add((b[j], power));
        }

        T u = algebra.Multiply(a, algebra.Combine(b[1], [.. uTerms]));
        T v = algebra.Combine(b[0], [.. vTerms]);
        return algebra.Solve(u, v);
    }

    /// <summary>
    /// Padé [13/13] approximant with the 6-multiplication evaluation of Higham (2005), eq. (3.5) (N. J. Higham, SIAM J. Matrix Anal. Appl. 26, 1179 (2005)).
    /// </summary>
    private static T Pade13<T>(Algebra<T> algebra, T a)
        where T : class
    {
        double[] b = B13;
        T a2 = algebra.Multiply(a, a);
        T a4 = algebra.Multiply(a2, a2);
        T a6 = algebra.Multiply(a4, a2);

        // Higham (2005) eq. (3.5): U = A[A6(b13 A6 + b11 A4 + b9 A2) + b7 A6 + b5 A4 + b3 A2 + b1 I].
        T uHigh = algebra.Combine(0, (b[13], a6), (b[11], a4), (b[9], a2));
        T uInner = algebra.Combine(b[1], (1, algebra.Multiply(a6, uHigh)), (b[7], a6), (b[5], a4), (b[3], a2));
        T u = algebra.Multiply(a, uInner);

        // Higham (2005) eq. (3.5): V = A6(b12 A6 + b10 A4 + b8 A2) + b6 A6 + b4 A4 + b2 A2 + b0 I.
        T vHigh = algebra.Combine(0, (b[12], a6), (b[10], a4), (b[8], a2));
        T v = algebra.Combine(b[0], (1, algebra.Multiply(a6, vHigh)), (b[6], a6), (b[4], a4), (b[2], a2));

        return algebra.Solve(u, v);
    }

    /// <summary>The operations the Padé evaluation needs, on dense or on block triangular matrices.</summary>
    private abstract class Algebra<T>
        where T : class
    {
        /// <summary>Squarings that will follow the Padé step (the block form skips F₁₁ when none do and it is not wanted).</summary>
        public int Squarings { get; set; }

        public abstract double Norm1(T x);

        public abstract T Identity();

        public abstract T Multiply(T x, T y);

        /// <summary>c₀ I + Σ cᵢ Xᵢ.</summary>
        public abstract T Combine(double identity, params ReadOnlySpan<(double Coefficient, T Term)> terms);

        /// <summary>r = (V − U)⁻¹ (V + U), Higham (2005) eq. (3.6).</summary>
        public abstract T Solve(T u, T v);
    }

    /// <summary>Dense n×n matrices: MathNet for small n, the blocked product and LU above <see cref="BlockedMinDimension"/>.</summary>
    private sealed class DenseAlgebra(int n) : Algebra<Matrix<double>>
    {
        public override double Norm1(Matrix<double> x) => x.L1Norm();

        public override Matrix<double> Identity() => Matrix<double>.Build.DenseIdentity(n);

        public override Matrix<double> Multiply(Matrix<double> x, Matrix<double> y)
            => DenseProduct.Product(x, y);

        public override Matrix<double> Combine(double identity, params ReadOnlySpan<(double Coefficient, Matrix<double> Term)> terms)
            => CombineDense(n, identity, terms);

        public override Matrix<double> Solve(Matrix<double> u, Matrix<double> v)
        {
            Matrix<double> p = v + u;
            Matrix<double> q = v - u;
            if (n < BlockedMinDimension) return q.LU().Solve(p);
            double[] x = DenseProduct.Dense(p);
            DenseLU.Factor(DenseProduct.Dense(q), n).SolveInPlace(x, n);
            return p;
        }
    }

    /// <summary>Block upper triangular [[X₁₁, X₁₂], [0, X₂₂]] with n×n blocks; X₁₁ may be dropped from the final solve.</summary>
    private sealed record Block(Matrix<double>? X11, Matrix<double> X12, Matrix<double>? X22);

    private sealed class BlockAlgebra(int n, bool wantF11) : Algebra<Block>
    {
        private readonly DenseAlgebra _dense = new(n);

        public override double Norm1(Block x)
        {
            // Column sums of the 2n×2n matrix: the first n columns see X₁₁ only, the last n see X₁₂ over X₂₂.
            double norm = x.X11!.L1Norm();
            for (int j = 0; j < n; j++)
            {
                norm = Math.Max(norm, x.X12.Column(j).L1Norm() + x.X22!.Column(j).L1Norm());
            }

            return norm;
        }

        public override Block Identity() => new(_dense.Identity(), Matrix<double>.Build.Dense(n, n), _dense.Identity());

        public override Block Multiply(Block x, Block y)
        {
            Matrix<double> c12 = _dense.Multiply(x.X11!, y.X12);
            if (n < BlockedMinDimension) c12 += x.X12.Multiply(y.X22!);
            else DenseProduct.MultiplyInto(1.0, x.X12, false, y.X22!, false, 1.0, c12);
            return new Block(_dense.Multiply(x.X11!, y.X11!), c12, _dense.Multiply(x.X22!, y.X22!));
        }

        public override Block Combine(double identity, params ReadOnlySpan<(double Coefficient, Block Term)> terms)
        {
            var t11 = new (double, Matrix<double>)[terms.Length];
            var t12 = new (double, Matrix<double>)[terms.Length];
            var t22 = new (double, Matrix<double>)[terms.Length];
            for (int i = 0; i < terms.Length; i++)
            {
                t11[i] = (terms[i].Coefficient, terms[i].Term.X11!);
                t12[i] = (terms[i].Coefficient, terms[i].Term.X12);
                t22[i] = (terms[i].Coefficient, terms[i].Term.X22!);
            }

            return new Block(CombineDense(n, identity, t11), CombineDense(n, 0, t12), CombineDense(n, identity, t22));
        }

        public override Block Solve(Block u, Block v)
        {
            // Block back substitution of (V − U) R = (V + U): R₂₂ = Q₂₂⁻¹ P₂₂, R₁₂ = Q₁₁⁻¹ (P₁₂ − Q₁₂ R₂₂), R₁₁ = Q₁₁⁻¹ P₁₁.
            Matrix<double> q11 = v.X11! - u.X11!;
            Matrix<double> r22 = _dense.Solve(u.X22!, v.X22!);
            Matrix<double> rhs12 = v.X12 + u.X12;
            Matrix<double> q12 = v.X12 - u.X12;
            if (n < BlockedMinDimension)
            {
                var lu = q11.LU();
                rhs12 -= q12 * r22;
                return new Block(Squarings > 0 || wantF11 ? lu.Solve(v.X11! + u.X11!) : null, lu.Solve(rhs12), r22);
            }

            DenseProduct.MultiplyInto(-1.0, q12, false, r22, false, 1.0, rhs12);
            DenseLU factor = DenseLU.Factor(DenseProduct.Dense(q11), n);
            factor.SolveInPlace(DenseProduct.Dense(rhs12), n);
            Matrix<double>? r11 = null;
            if (Squarings > 0 || wantF11)
            {
                r11 = v.X11! + u.X11!;
                factor.SolveInPlace(DenseProduct.Dense(r11), n);
            }

            return new Block(r11, rhs12, r22);
        }
    }

    private static Matrix<double> CombineDense(int n, double identity, ReadOnlySpan<(double Coefficient, Matrix<double> Term)> terms)
    {
        var result = Matrix<double>.Build.Dense(n, n);
        double[] r = DenseProduct.Dense(result);
        foreach (var (c, term) in terms)
        {
            double[] x = DenseProduct.Dense(term);
            for (int i = 0; i < r.Length; i++) r[i] += c * x[i];
        }

        for (int i = 0; i < n; i++) r[i * (n + 1)] += identity;
        return result;
    }

    /// <summary>From this n on, products and solves go through <see cref="DenseProduct"/> and <see cref="DenseLU"/>.</summary>
    internal const int BlockedMinDimension = 48;
}

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

        double norm = a.L1Norm();
        if (norm == 0)
        {
            return Matrix<double>.Build.DenseIdentity(n);
        }

        // Algorithm 2.3 of Higham (2005), first branch: low degrees need no scaling.
        if (norm <= Theta3) return PadeLow(a, B3);
        if (norm <= Theta5) return PadeLow(a, B5);
        if (norm <= Theta7) return PadeLow(a, B7);
        if (norm <= Theta9) return PadeLow(a, B9);

        // Algorithm 2.3, second branch: s = ceil(log2(||A||_1 / θ13)), A <- A / 2^s.
        int s = Math.Max(0, (int)Math.Ceiling(Math.Log2(norm / Theta13)));
        Matrix<double> scaled = s == 0 ? a : a.Multiply(Math.ScaleB(1.0, -s));
        Matrix<double> r = Pade13(scaled);
        // Undo the scaling: e^A = (r13(A / 2^s))^(2^s).
        for (int k = 0; k < s; k++)
        {
            r = r.Multiply(r);
        }

        return r;
    }

    /// <summary>
    /// Padé [m/m] approximant r_m(A) = q_m(A)^{-1} p_m(A) for m ≤ 9 (Higham 2005, eqs. 2.2 and 3.4).
    /// </summary>
    private static Matrix<double> PadeLow(Matrix<double> a, double[] b)
    {
        int n = a.RowCount;
        Matrix<double> identity = Matrix<double>.Build.DenseIdentity(n);
        Matrix<double> a2 = a.Multiply(a);
        // Split p_m(A) = U + V into odd (U) and even (V) parts, Higham (2005) eq. (3.4).
        Matrix<double> uInner = identity.Multiply(b[1]);
        Matrix<double> v = identity.Multiply(b[0]);
        Matrix<double> power = identity;
        for (int j = 2; j < b.Length; j += 2)
        {
            power = power.Multiply(a2);
            uInner = uInner.Add(power.Multiply(b[j + 1]));
            v = v.Add(power.Multiply(b[j]));
        }

        Matrix<double> u = a.Multiply(uInner);
        return SolvePade(u, v);
    }

    /// <summary>
    /// Padé [13/13] approximant with the 6-multiplication evaluation of Higham (2005), eq. (3.5) (N. J. Higham, SIAM J. Matrix Anal. Appl. 26, 1179 (2005)).
    /// </summary>
    private static Matrix<double> Pade13(Matrix<double> a)
    {
        int n = a.RowCount;
        double[] b = B13;
        Matrix<double> identity = Matrix<double>.Build.DenseIdentity(n);
        Matrix<double> a2 = a.Multiply(a);
        Matrix<double> a4 = a2.Multiply(a2);
        Matrix<double> a6 = a4.Multiply(a2);

        // Higham (2005) eq. (3.5): U = A[A6(b13 A6 + b11 A4 + b9 A2) + b7 A6 + b5 A4 + b3 A2 + b1 I].
        Matrix<double> uHigh = a6.Multiply(b[13]) + a4.Multiply(b[11]) + a2.Multiply(b[9]);
        Matrix<double> uInner = a6.Multiply(uHigh)
            + a6.Multiply(b[7]) + a4.Multiply(b[5]) + a2.Multiply(b[3]) + identity.Multiply(b[1]);
        Matrix<double> u = a.Multiply(uInner);

        // Higham (2005) eq. (3.5): V = A6(b12 A6 + b10 A4 + b8 A2) + b6 A6 + b4 A4 + b2 A2 + b0 I.
        Matrix<double> vHigh = a6.Multiply(b[12]) + a4.Multiply(b[10]) + a2.Multiply(b[8]);
        Matrix<double> v = a6.Multiply(vHigh)
            + a6.Multiply(b[6]) + a4.Multiply(b[4]) + a2.Multiply(b[2]) + identity.Multiply(b[0]);

        return SolvePade(u, v);
    }

    /// <summary>
    /// Solves (−U + V) r = (U + V) for r_m(A), Higham (2005) eq. (3.6), by LU with partial pivoting.
    /// </summary>
    private static Matrix<double> SolvePade(Matrix<double> u, Matrix<double> v)
    {
        Matrix<double> p = v + u;
        Matrix<double> q = v - u;
        return q.LU().Solve(p);
    }
}

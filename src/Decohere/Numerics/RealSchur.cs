using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Numerics;

/// <summary>
/// Real Schur form A = Z T Zᵀ: Z orthogonal, T upper quasi-triangular with 1×1 blocks (real eigenvalues) and 2×2 blocks
/// (complex pairs), by Householder reduction to Hessenberg form and the Francis double-shift QR iteration
/// (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Johns Hopkins (2013), alg. 7.4.2 and 7.5.2).
/// </summary>
/// <remarks>
/// T is held row-major and Z column-major, so that both the row updates of T and the column updates of Z stream contiguous memory.
/// Real 2×2 blocks are split by a rotation onto their eigenvector, so every 2×2 block left has a complex pair.
/// </remarks>
internal sealed class RealSchur
{
    // Iterations allowed per eigenvalue before giving up (LAPACK's dlahqr allows 30 per deflation window).
    private const int MaxIterationsPerEigenvalue = 60;

    private RealSchur(int n, double[] t, double[] z)
    {
        N = n;
        T = t;
        Z = z;
        var eigenvalues = new Complex[n];
        var blocks = new List<int>();
        for (int i = 0; i < n;)
        {
            blocks.Add(i);
            if (i + 1 < n && t[(i + 1) * n + i] != 0)
            {
                double a = t[i * n + i], b = t[i * n + i + 1], c = t[(i + 1) * n + i], d = t[(i + 1) * n + i + 1];
                double p = 0.5 * (a - d);
                double im = Math.Sqrt(Math.Abs(p * p + b * c));
                eigenvalues[i] = new Complex(0.5 * (a + d), im);
                eigenvalues[i + 1] = new Complex(0.5 * (a + d), -im);
                i += 2;
            }
            else
            {
                eigenvalues[i] = t[i * n + i];
                i++;
            }
        }

        blocks.Add(n);
        Eigenvalues = eigenvalues;
        BlockStarts = [.. blocks];
    }

    /// <summary>Dimension n.</summary>
    public int N { get; }

    /// <summary>T, row-major n×n, zero below its 1×1 and 2×2 diagonal blocks.</summary>
    public double[] T { get; }

    /// <summary>Z, column-major n×n (equivalently Zᵀ row-major).</summary>
    public double[] Z { get; }

    /// <summary>Eigenvalues in the order of the diagonal blocks; a complex pair as (λ, λ̄).</summary>
    public IReadOnlyList<Complex> Eigenvalues { get; }

    /// <summary>First index of each diagonal block, then n.</summary>
    public int[] BlockStarts { get; }

    /// <summary>Z as a dense matrix sharing no storage with this object.</summary>
    public Matrix<double> ZMatrix() => Matrix<double>.Build.Dense(N, N, (double[])Z.Clone());

    /// <summary>Real Schur form of a square matrix with finite entries.</summary>
    /// <exception cref="InvalidOperationException">The QR iteration did not converge.</exception>
    public static RealSchur Decompose(Matrix<double> a)
    {
        int n = a.RowCount;
        var t = new double[n * n];
        double[] colMajor = DenseProduct.Dense(a.Storage.IsDense ? a : Matrix<double>.Build.DenseOfMatrix(a));
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i < n; i++) t[i * n + j] = colMajor[i + j * n];
        }

        var z = new double[n * n];
        for (int i = 0; i < n; i++) z[i * n + i] = 1.0;
        Hessenberg(n, t, z);
        FrancisQR(n, t, z);
        return new RealSchur(n, t, z);
    }

    /// <summary>Householder reduction H = Q₀ᵀ A Q₀, Z ← Z Q₀ (Golub and Van Loan, alg. 7.4.2).</summary>
    private static void Hessenberg(int n, double[] h, double[] z)
    {
        var v = new double[n];
        var w = new double[n];
        for (int k = 0; k < n - 2; k++)
        {
            int m = n - k - 1;
            double scale = 0;
            for (int i = k + 1; i < n; i++) scale += Math.Abs(h[i * n + k]);
            if (scale == 0) continue;
            double tail = 0;
            for (int i = k + 1; i < n; i++)
            {
                double x = h[i * n + k] / scale;
                v[i - k - 1] = x;
                if (i > k + 1) tail += x * x;
            }

            if (tail == 0) continue;
            double sigma = tail + v[0] * v[0];
            double alpha = v[0] > 0 ? -Math.Sqrt(sigma) : Math.Sqrt(sigma);
            v[0] -= alpha;
            // P = I − β v vᵀ maps x to α e₁ (Golub and Van Loan, alg. 5.1.1), β = 2 / vᵀv.
            double beta = 2.0 / (tail + v[0] * v[0]);
            Span<double> vs = v.AsSpan(0, m);

            // Left: rows k+1..n−1 of H, columns k+1..n−1 (column k is set directly).
            Span<double> ws = w.AsSpan(0, m);
            ws.Clear();
            for (int i = 0; i < m; i++) Axpy(vs[i], h.AsSpan((k + 1 + i) * n + k + 1, m), ws);
            for (int i = 0; i < m; i++) Axpy(-beta * vs[i], ws, h.AsSpan((k + 1 + i) * n + k + 1, m));
            h[(k + 1) * n + k] = alpha * scale;
            for (int i = k + 2; i < n; i++) h[i * n + k] = 0;

            // Right: every row, columns k+1..n−1; rows are independent.
            double[] vArr = v;
            ForRows(n, (long)n * m, i =>
            {
                Span<double> row = h.AsSpan(i * n + k + 1, m);
                double s = Dot(row, vArr.AsSpan(0, m));
                Axpy(-beta * s, vArr.AsSpan(0, m), row);
            });

            // Z ← Z P: columns k+1..n−1 of the column-major Z.
            ws = w.AsSpan(0, n);
            ws.Clear();
            for (int i = 0; i < m; i++) Axpy(vs[i], z.AsSpan((k + 1 + i) * n, n), ws);
            for (int i = 0; i < m; i++) Axpy(-beta * vs[i], ws, z.AsSpan((k + 1 + i) * n, n));
        }
    }

    /// <summary>Francis double-shift QR on the Hessenberg H with deflation, accumulating into Z (Golub and Van Loan, alg. 7.5.1 and 7.5.2).</summary>
    private static void FrancisQR(int n, double[] h, double[] z)
    {
        double eps = Math.ScaleB(1.0, -52);
        double norm = 0;
        for (int i = 0; i < h.Length; i++) norm = Math.Max(norm, Math.Abs(h[i]));
        int hi = n - 1;
        int iterations = 0;
        int budget = MaxIterationsPerEigenvalue * Math.Max(n, 10);
        while (hi >= 0)
        {
            // Deflation: the lowest l with a negligible subdiagonal entry h[l, l−1] (Golub and Van Loan, eq. 7.5.6).
            int l = hi;
            for (; l > 0; l--)
            {
                double s = Math.Abs(h[(l - 1) * n + l - 1]) + Math.Abs(h[l * n + l]);
                if (s == 0) s = norm;
                if (Math.Abs(h[l * n + l - 1]) <= eps * s)
                {
                    h[l * n + l - 1] = 0;
                    break;
                }
            }

            if (l == hi)
            {
                hi--;
                iterations = 0;
                continue;
            }

            if (l == hi - 1)
            {
                SplitRealPair(n, h, z, hi - 1);
                hi -= 2;
                iterations = 0;
                continue;
            }

            if (--budget < 0)
            {
                throw new InvalidOperationException($"QR iteration for the real Schur form did not converge (n = {n}).");
            }

            iterations++;
            double s1, t1;
            if (iterations % 10 == 0)
            {
                // Exceptional shift after a stall, as in EISPACK's hqr (B. T. Smith et al., EISPACK Guide, Springer (1976)).
                double w = Math.Abs(h[hi * n + hi - 1]) + Math.Abs(h[(hi - 1) * n + hi - 2]);
                s1 = 1.5 * w;
                t1 = w * w;
            }
            else
            {
                // Shifts: the eigenvalues of the trailing 2×2 block, as their sum and product (Golub and Van Loan, §7.5.5).
                s1 = h[(hi - 1) * n + hi - 1] + h[hi * n + hi];
                t1 = h[(hi - 1) * n + hi - 1] * h[hi * n + hi] - h[(hi - 1) * n + hi] * h[hi * n + hi - 1];
            }

            DoubleShiftSweep(n, h, z, l, hi, s1, t1);
        }
    }

    /// <summary>One implicit double-shift step on the window l..hi by bulge chasing (Golub and Van Loan, alg. 7.5.1).</summary>
    private static void DoubleShiftSweep(int n, double[] h, double[] z, int l, int hi, double s, double t)
    {
        // First column of (H − σ₁)(H − σ₂) = H² − sH + tI restricted to the window.
        double h00 = h[l * n + l], h01 = h[l * n + l + 1], h10 = h[(l + 1) * n + l], h11 = h[(l + 1) * n + l + 1];
        double x = h00 * h00 + h01 * h10 - s * h00 + t;
        double y = h10 * (h00 + h11 - s);
        double zz = h10 * h[(l + 2) * n + l + 1];
        for (int q = l; q <= hi - 2; q++)
        {
            Reflect3(n, h, z, q, l, hi, x, y, zz);
            x = h[(q + 1) * n + q];
            y = h[(q + 2) * n + q];
            if (q < hi - 2) zz = h[(q + 3) * n + q];
        }

        Reflect2(n, h, z, hi - 1, hi, x, y);
    }

    /// <summary>Householder reflector on rows and columns q..q+2 that maps (x, y, z) to a multiple of e₁.</summary>
    private static void Reflect3(int n, double[] h, double[] z, int q, int l, int hi, double x, double y, double w)
    {
        double scale = Math.Abs(x) + Math.Abs(y) + Math.Abs(w);
        if (scale == 0) return;
        x /= scale;
        y /= scale;
        w /= scale;
        double norm = Math.Sqrt(x * x + y * y + w * w);
        double alpha = x > 0 ? -norm : norm;
        double v0 = x - alpha, v1 = y, v2 = w;
        double beta = 2.0 / (v0 * v0 + v1 * v1 + v2 * v2);

        // Rows q..q+2, columns from the bulge column on (the whole row of T: the Schur form is wanted, not only eigenvalues).
        int c0 = Math.Max(l, q - 1);
        RowReflect3(h.AsSpan(q * n + c0, n - c0), h.AsSpan((q + 1) * n + c0, n - c0), h.AsSpan((q + 2) * n + c0, n - c0),
            v0, v1, v2, beta);
        if (q > l)
        {
            // The chased bulge: these two are zero in exact arithmetic.
            h[(q + 1) * n + q - 1] = 0;
            h[(q + 2) * n + q - 1] = 0;
        }

        // Columns q..q+2, rows 0..min(q+3, hi).
        int rEnd = Math.Min(q + 3, hi);
        for (int r = 0; r <= rEnd; r++)
        {
            int o = r * n + q;
            double sum = beta * (h[o] * v0 + h[o + 1] * v1 + h[o + 2] * v2);
            h[o] -= sum * v0;
            h[o + 1] -= sum * v1;
            h[o + 2] -= sum * v2;
        }

        RowReflect3(z.AsSpan(q * n, n), z.AsSpan((q + 1) * n, n), z.AsSpan((q + 2) * n, n), v0, v1, v2, beta);
    }

    /// <summary>The closing 2×2 reflector of a sweep on rows and columns q, q+1.</summary>
    private static void Reflect2(int n, double[] h, double[] z, int q, int hi, double x, double y)
    {
        double scale = Math.Abs(x) + Math.Abs(y);
        if (scale == 0) return;
        x /= scale;
        y /= scale;
        double norm = Math.Sqrt(x * x + y * y);
        double alpha = x > 0 ? -norm : norm;
        double v0 = x - alpha, v1 = y;
        double beta = 2.0 / (v0 * v0 + v1 * v1);
        int c0 = q - 1;
        RowReflect2(h.AsSpan(q * n + c0, n - c0), h.AsSpan((q + 1) * n + c0, n - c0), v0, v1, beta);
        h[(q + 1) * n + q - 1] = 0;
        for (int r = 0; r <= hi; r++)
        {
            int o = r * n + q;
            double sum = beta * (h[o] * v0 + h[o + 1] * v1);
            h[o] -= sum * v0;
            h[o + 1] -= sum * v1;
        }

        RowReflect2(z.AsSpan(q * n, n), z.AsSpan((q + 1) * n, n), v0, v1, beta);
    }

    /// <summary>
    /// Splits a converged 2×2 block at (i, i) with real eigenvalues by the rotation onto an eigenvector; a complex pair is left
    /// as it is (the rotation is the one of EISPACK's hqr2, B. T. Smith et al., EISPACK Guide, Springer (1976)).
    /// </summary>
    private static void SplitRealPair(int n, double[] h, double[] z, int i)
    {
        int j = i + 1;
        double c = h[j * n + i];
        if (c == 0) return;
        double p = 0.5 * (h[i * n + i] - h[j * n + j]);
        double q = p * p + c * h[i * n + j];
        if (q < 0) return;
        double root = Math.Sqrt(q);
        // (λ − h_jj, h_ji) with the eigenvalue λ farther from h_jj is an eigenvector; normalise it to (cs, sn).
        double e = p >= 0 ? p + root : p - root;
        double r = Math.Sqrt(e * e + c * c);
        double cs = e / r, sn = c / r;
        for (int k = i; k < n; k++)
        {
            double a = h[i * n + k], b = h[j * n + k];
            h[i * n + k] = cs * a + sn * b;
            h[j * n + k] = cs * b - sn * a;
        }

        for (int k = 0; k <= j; k++)
        {
            double a = h[k * n + i], b = h[k * n + j];
            h[k * n + i] = cs * a + sn * b;
            h[k * n + j] = cs * b - sn * a;
        }

        h[j * n + i] = 0;
        for (int k = 0; k < n; k++)
        {
            double a = z[i * n + k], b = z[j * n + k];
            z[i * n + k] = cs * a + sn * b;
            z[j * n + k] = cs * b - sn * a;
        }
    }

    private static void RowReflect3(Span<double> r0, Span<double> r1, Span<double> r2, double v0, double v1, double v2, double beta)
    {
        int len = r0.Length;
        int k = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            ref double p0 = ref MemoryMarshal.GetReference(r0);
            ref double p1 = ref MemoryMarshal.GetReference(r1);
            ref double p2 = ref MemoryMarshal.GetReference(r2);
            Vector256<double> w0 = Vector256.Create(v0), w1 = Vector256.Create(v1), w2 = Vector256.Create(v2);
            Vector256<double> b0 = Vector256.Create(beta * v0), b1 = Vector256.Create(beta * v1), b2 = Vector256.Create(beta * v2);
            for (; k + 4 <= len; k += 4)
            {
                nuint o = (nuint)k;
                Vector256<double> x0 = Vector256.LoadUnsafe(ref p0, o), x1 = Vector256.LoadUnsafe(ref p1, o), x2 = Vector256.LoadUnsafe(ref p2, o);
                Vector256<double> s = x0 * w0 + x1 * w1 + x2 * w2;
                (x0 - s * b0).StoreUnsafe(ref p0, o);
                (x1 - s * b1).StoreUnsafe(ref p1, o);
                (x2 - s * b2).StoreUnsafe(ref p2, o);
            }
        }

        for (; k < len; k++)
        {
            double s = r0[k] * v0 + r1[k] * v1 + r2[k] * v2;
            r0[k] -= s * beta * v0;
            r1[k] -= s * beta * v1;
            r2[k] -= s * beta * v2;
        }
    }

    private static void RowReflect2(Span<double> r0, Span<double> r1, double v0, double v1, double beta)
    {
        for (int k = 0; k < r0.Length; k++)
        {
            double s = beta * (r0[k] * v0 + r1[k] * v1);
            r0[k] -= s * v0;
            r1[k] -= s * v1;
        }
    }

    /// <summary>y += a·x.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static void Axpy(double a, ReadOnlySpan<double> x, Span<double> y)
    {
        int k = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            ref double px = ref MemoryMarshal.GetReference(x);
            ref double py = ref MemoryMarshal.GetReference(y);
            Vector256<double> va = Vector256.Create(a);
            for (; k + 4 <= x.Length; k += 4)
            {
                (Vector256.LoadUnsafe(ref py, (nuint)k) + va * Vector256.LoadUnsafe(ref px, (nuint)k)).StoreUnsafe(ref py, (nuint)k);
            }
        }

        for (; k < x.Length; k++) y[k] += a * x[k];
    }

    /// <summary>xᵀy in a fixed order (four lanes, then the lanes summed, then the tail).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static double Dot(ReadOnlySpan<double> x, ReadOnlySpan<double> y)
    {
        int k = 0;
        double sum = 0;
        if (Vector256.IsHardwareAccelerated && x.Length >= 8)
        {
            ref double px = ref MemoryMarshal.GetReference(x);
            ref double py = ref MemoryMarshal.GetReference(y);
            Vector256<double> acc = Vector256<double>.Zero;
            for (; k + 4 <= x.Length; k += 4)
            {
                acc += Vector256.LoadUnsafe(ref px, (nuint)k) * Vector256.LoadUnsafe(ref py, (nuint)k);
            }

            sum = acc.GetElement(0) + acc.GetElement(1) + (acc.GetElement(2) + acc.GetElement(3));
        }

        for (; k < x.Length; k++) sum += x[k] * y[k];
        return sum;
    }

    private static void ForRows(int rows, long work, Action<int> body)
    {
        if (work < 1L << 16 || Environment.ProcessorCount == 1)
        {
            for (int i = 0; i < rows; i++) body(i);
            return;
        }

        int chunks = Math.Min(rows, 4 * Environment.ProcessorCount);
        Parallel.For(0, chunks, c =>
        {
            int start = (int)((long)rows * c / chunks), end = (int)((long)rows * (c + 1) / chunks);
            for (int i = start; i < end; i++) body(i);
        });
    }
}

using System.Buffers;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Numerics;

/// <summary>
/// Dense matrix products C ← α op(A) op(B) + β C on MathNet's column-major storage, cache-blocked with packed panels and an
/// 8×6 AVX2/FMA register kernel (K. Goto and R. A. van de Geijn, ACM Trans. Math. Softw. 34, 12 (2008)).
/// </summary>
/// <remarks>
/// Column blocks of C run in parallel. Every element is accumulated in the same order whatever the number of threads or the
/// column partition: from zero, over k in fixed blocks of <see cref="KBlock"/>, each block added to C in turn, with the same
/// kernel on zero-padded panels at the edges. So results are bitwise reproducible across machines with the same instruction set.
/// </remarks>
public static class DenseProduct
{
    private const int MR = 8;
    private const int NR = 6;

    /// <summary>Depth of one packed panel; fixed, because it fixes the summation order.</summary>
    public const int KBlock = 256;

    // A block of MBlock×KBlock (192 KiB) stays in L2 while 6-column panels of B (12 KiB) stream through L1.
    private const int MBlock = 96;
    private const int NBlockMax = 192;
    private const int MinParallelWidth = 48;

    // Below this many multiply-adds one thread is faster than the fork.
    private const long ParallelThreshold = 48L * 48 * 48;

    /// <summary>C = op(A) op(B) as a new dense matrix.</summary>
    /// <param name="a">Left factor (m×k, or k×m when <paramref name="transposeA"/>).</param>
    /// <param name="b">Right factor (k×n, or n×k when <paramref name="transposeB"/>).</param>
    /// <param name="transposeA">Use Aᵀ.</param>
    /// <param name="transposeB">Use Bᵀ.</param>
    /// <exception cref="ArgumentException">Inner dimensions differ.</exception>
    public static Matrix<double> Multiply(Matrix<double> a, Matrix<double> b, bool transposeA = false, bool transposeB = false)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        int m = transposeA ? a.ColumnCount : a.RowCount;
        int n = transposeB ? b.RowCount : b.ColumnCount;
        var c = Matrix<double>.Build.Dense(m, n);
        MultiplyInto(1.0, a, transposeA, b, transposeB, 0.0, c);
        return c;
    }

    /// <summary>C ← α op(A) op(B) + β C in place (β = 0 ignores the old C, even NaN).</summary>
    /// <exception cref="ArgumentException">Shapes do not conform, C aliases A or B, or C is not dense.</exception>
    public static void MultiplyInto(
        double alpha, Matrix<double> a, bool transposeA, Matrix<double> b, bool transposeB, double beta, Matrix<double> c)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        ArgumentNullException.ThrowIfNull(c);
        int m = transposeA ? a.ColumnCount : a.RowCount;
        int k = transposeA ? a.RowCount : a.ColumnCount;
        int kb = transposeB ? b.ColumnCount : b.RowCount;
        int n = transposeB ? b.RowCount : b.ColumnCount;
        if (k != kb)
        {
            throw new ArgumentException($"inner dimensions differ: op(a) is {m}×{k}, op(b) is {kb}×{n}.", nameof(b));
        }

        if (c.RowCount != m || c.ColumnCount != n)
        {
            throw new ArgumentException($"c is {c.RowCount}×{c.ColumnCount}, expected {m}×{n}.", nameof(c));
        }

        if (ReferenceEquals(c, a) || ReferenceEquals(c, b))
        {
            throw new ArgumentException("c must not be one of the factors.", nameof(c));
        }

        double[] ad = DenseCopyIfNeeded(a), bd = DenseCopyIfNeeded(b), cd = Dense(c);
        Multiply(m, n, k, alpha, ad, 0, a.RowCount, transposeA, bd, 0, b.RowCount, transposeB, beta, cd, 0, m);
    }

    /// <summary>Φ V Φᵀ + Q, exactly symmetric (upper triangle mirrored), for symmetric V and Q.</summary>
    /// <exception cref="ArgumentException">The matrices are not square of one size.</exception>
    public static Matrix<double> Congruence(Matrix<double> phi, Matrix<double> v, Matrix<double> q)
    {
        ArgumentNullException.ThrowIfNull(phi);
        ArgumentNullException.ThrowIfNull(v);
        ArgumentNullException.ThrowIfNull(q);
        Validation.RequireSameSize(phi, v, nameof(phi), nameof(v));
        Validation.RequireSameSize(phi, q, nameof(phi), nameof(q));
        Matrix<double> w = Multiply(phi, v);
        Matrix<double> result = q.Clone();
        MultiplyInto(1.0, w, false, phi, true, 1.0, result);
        MirrorUpper(result);
        return result;
    }

    /// <summary>
    /// X Y or X Yᵀ: MathNet's product below <see cref="MatrixExponential.BlockedMinDimension"/>, where packing costs more
    /// than it saves, the blocked product from there on.
    /// </summary>
    internal static Matrix<double> Product(Matrix<double> x, Matrix<double> y, bool transposeY = false)
    {
        if (x.RowCount < MatrixExponential.BlockedMinDimension) return transposeY ? x.TransposeAndMultiply(y) : x * y;
        return Multiply(x, y, transposeB: transposeY);
    }

    /// <summary>Overwrites the strict lower triangle of a square matrix with its upper one.</summary>
    internal static void MirrorUpper(Matrix<double> m) => MirrorUpper(Dense(m), m.RowCount);

    /// <summary>The same on a column-major n×n array.</summary>
    internal static void MirrorUpper(double[] x, int n)
    {
        for (int j = 0; j < n; j++)
        {
            for (int i = j + 1; i < n; i++) x[i + j * n] = x[j + i * n];
        }
    }

    private static double[] DenseCopyIfNeeded(Matrix<double> m)
        => m.AsColumnMajorArray() ?? Matrix<double>.Build.DenseOfMatrix(m).AsColumnMajorArray();

    internal static double[] Dense(Matrix<double> m)
        => m.AsColumnMajorArray() ?? throw new ArgumentException("only dense matrices are supported.", nameof(m));

    /// <summary>
    /// C ← α op(A) op(B) + β C on column-major sub-blocks of raw arrays: element (i, j) of X at x[xo + i + j·ldx].
    /// </summary>
    internal static void Multiply(
        int m, int n, int k, double alpha,
        double[] a, int ao, int lda, bool transposeA,
        double[] b, int bo, int ldb, bool transposeB,
        double beta, double[] c, int co, int ldc)
    {
        if (m == 0 || n == 0) return;
        if (k == 0 || alpha == 0)
        {
            ScaleC(m, n, beta, c, co, ldc);
            return;
        }

        if (!(Fma.IsSupported && Vector256.IsHardwareAccelerated))
        {
            Reference(m, n, k, alpha, a, ao, lda, transposeA, b, bo, ldb, transposeB, beta, c, co, ldc);
            return;
        }

        int threads = Environment.ProcessorCount;
        bool parallel = threads > 1 && (long)m * n * k >= ParallelThreshold;
        // Several blocks per thread, so a thread slowed by other load on the machine takes fewer of them.
        int blocks = Math.Max(parallel ? Math.Min(4 * threads, (n + MinParallelWidth - 1) / MinParallelWidth) : 1, (n + NBlockMax - 1) / NBlockMax);
        int width = ((n + blocks - 1) / blocks + NR - 1) / NR * NR;
        blocks = (n + width - 1) / width;

        if (!parallel || blocks == 1)
        {
            for (int jb = 0; jb < blocks; jb++)
            {
                ColumnBlock(m, k, alpha, a, ao, lda, transposeA, b, bo, ldb, transposeB, beta, c, co, ldc, jb * width, Math.Min(n, (jb + 1) * width));
            }

            return;
        }

        Parallel.For(0, blocks, new ParallelOptions { MaxDegreeOfParallelism = threads },
            jb => ColumnBlock(m, k, alpha, a, ao, lda, transposeA, b, bo, ldb, transposeB, beta, c, co, ldc, jb * width, Math.Min(n, (jb + 1) * width)));
    }

    private static void ScaleC(int m, int n, double beta, double[] c, int co, int ldc)
    {
        for (int j = 0; j < n; j++)
        {
            Span<double> col = c.AsSpan(co + j * ldc, m);
            if (beta == 0) col.Clear();
            else if (beta != 1) for (int i = 0; i < m; i++) col[i] *= beta;
        }
    }

    private static void ColumnBlock(
        int m, int k, double alpha,
        double[] a, int ao, int lda, bool transposeA,
        double[] b, int bo, int ldb, bool transposeB,
        double beta, double[] c, int co, int ldc, int j0, int j1)
    {
        int nb = j1 - j0;
        int panelsB = (nb + NR - 1) / NR;
        double[] packB = ArrayPool<double>.Shared.Rent(panelsB * NR * KBlock);
        double[] packA = ArrayPool<double>.Shared.Rent(MBlock * KBlock);
        Span<double> tile = stackalloc double[MR * NR];
        try
        {
            for (int p0 = 0; p0 < k; p0 += KBlock)
            {
                int kc = Math.Min(KBlock, k - p0);
                double betaBlock = p0 == 0 ? beta : 1.0;
                PackB(b, bo, ldb, transposeB, p0, kc, j0, nb, packB);
                for (int i0 = 0; i0 < m; i0 += MBlock)
                {
                    int mc = Math.Min(MBlock, m - i0);
                    PackA(a, ao, lda, transposeA, i0, mc, p0, kc, packA);
                    for (int jp = 0; jp < panelsB; jp++)
                    {
                        int jj = j0 + jp * NR;
                        int ncols = Math.Min(NR, j1 - jj);
                        ref double bp = ref packB[jp * NR * kc];
                        for (int ip = 0; ip * MR < mc; ip++)
                        {
                            int ii = i0 + ip * MR;
                            int nrows = Math.Min(MR, m - ii);
                            ref double ap = ref packA[ip * MR * kc];
                            if (nrows == MR && ncols == NR)
                            {
                                Kernel(kc, ref ap, ref bp, alpha, betaBlock, ref c[co + ii + jj * ldc], ldc);
                            }
                            else
                            {
                                // Same kernel into a scratch tile, so edge elements are summed exactly as inner ones.
                                for (int j = 0; j < NR; j++)
                                {
                                    for (int i = 0; i < MR; i++)
                                    {
                                        tile[i + j * MR] = i < nrows && j < ncols ? c[co + ii + i + (jj + j) * ldc] : 0.0;
                                    }
                                }

                                Kernel(kc, ref ap, ref bp, alpha, betaBlock, ref tile[0], MR);
                                for (int j = 0; j < ncols; j++)
                                {
                                    for (int i = 0; i < nrows; i++) c[co + ii + i + (jj + j) * ldc] = tile[i + j * MR];
                                }
                            }
                        }
                    }
                }
            }
        }
        finally
        {
            ArrayPool<double>.Shared.Return(packA);
            ArrayPool<double>.Shared.Return(packB);
        }
    }

    /// <summary>Packs op(A)[i0:i0+mc, p0:p0+kc] as MR-row panels, k-major inside a panel, zero-padded to MR rows.</summary>
    private static void PackA(double[] a, int ao, int lda, bool transposeA, int i0, int mc, int p0, int kc, double[] pack)
    {
        for (int ip = 0; ip * MR < mc; ip++)
        {
            int rows = Math.Min(MR, mc - ip * MR);
            int baseRow = i0 + ip * MR;
            Span<double> panel = pack.AsSpan(ip * MR * kc, MR * kc);
            if (!transposeA && rows == MR)
            {
                for (int p = 0; p < kc; p++)
                {
                    a.AsSpan(ao + baseRow + (p0 + p) * lda, MR).CopyTo(panel.Slice(p * MR, MR));
                }

                continue;
            }

            for (int p = 0; p < kc; p++)
            {
                for (int i = 0; i < MR; i++)
                {
                    panel[p * MR + i] = i >= rows ? 0.0
                        : transposeA ? a[ao + (p0 + p) + (baseRow + i) * lda] : a[ao + (baseRow + i) + (p0 + p) * lda];
                }
            }
        }
    }

    /// <summary>Packs op(B)[p0:p0+kc, j0:j0+nb] as NR-column panels, k-major inside a panel, zero-padded to NR columns.</summary>
    private static void PackB(double[] b, int bo, int ldb, bool transposeB, int p0, int kc, int j0, int nb, double[] pack)
    {
        for (int jp = 0; jp * NR < nb; jp++)
        {
            int cols = Math.Min(NR, nb - jp * NR);
            int baseCol = j0 + jp * NR;
            Span<double> panel = pack.AsSpan(jp * NR * kc, NR * kc);
            for (int j = 0; j < NR; j++)
            {
                if (j >= cols)
                {
                    for (int p = 0; p < kc; p++) panel[p * NR + j] = 0.0;
                }
                else if (transposeB)
                {
                    for (int p = 0; p < kc; p++) panel[p * NR + j] = b[bo + (baseCol + j) + (p0 + p) * ldb];
                }
                else
                {
                    ReadOnlySpan<double> col = b.AsSpan(bo + p0 + (baseCol + j) * ldb, kc);
                    for (int p = 0; p < kc; p++) panel[p * NR + j] = col[p];
                }
            }
        }
    }

    /// <summary>8×6 register tile: C ← α Σ_p a_p b_pᵀ + β C with twelve 4-wide accumulators (Goto and van de Geijn 2008, §6).</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private static void Kernel(int kc, ref double ap, ref double bp, double alpha, double beta, ref double c, int ldc)
    {
        Vector256<double> c00 = default, c01 = default, c10 = default, c11 = default, c20 = default, c21 = default;
        Vector256<double> c30 = default, c31 = default, c40 = default, c41 = default, c50 = default, c51 = default;
        for (int p = 0; p < kc; p++)
        {
            Vector256<double> a0 = Vector256.LoadUnsafe(ref ap);
            Vector256<double> a1 = Vector256.LoadUnsafe(ref ap, 4);
            Vector256<double> x = Vector256.Create(bp);
            c00 = Fma.MultiplyAdd(a0, x, c00);
            c01 = Fma.MultiplyAdd(a1, x, c01);
            x = Vector256.Create(Unsafe.Add(ref bp, 1));
            c10 = Fma.MultiplyAdd(a0, x, c10);
            c11 = Fma.MultiplyAdd(a1, x, c11);
            x = Vector256.Create(Unsafe.Add(ref bp, 2));
            c20 = Fma.MultiplyAdd(a0, x, c20);
            c21 = Fma.MultiplyAdd(a1, x, c21);
            x = Vector256.Create(Unsafe.Add(ref bp, 3));
            c30 = Fma.MultiplyAdd(a0, x, c30);
            c31 = Fma.MultiplyAdd(a1, x, c31);
            x = Vector256.Create(Unsafe.Add(ref bp, 4));
            c40 = Fma.MultiplyAdd(a0, x, c40);
            c41 = Fma.MultiplyAdd(a1, x, c41);
            x = Vector256.Create(Unsafe.Add(ref bp, 5));
            c50 = Fma.MultiplyAdd(a0, x, c50);
            c51 = Fma.MultiplyAdd(a1, x, c51);
            ap = ref Unsafe.Add(ref ap, MR);
            bp = ref Unsafe.Add(ref bp, NR);
        }

        Store(ref c, 0, c00, c01, alpha, beta);
        Store(ref c, ldc, c10, c11, alpha, beta);
        Store(ref c, 2 * ldc, c20, c21, alpha, beta);
        Store(ref c, 3 * ldc, c30, c31, alpha, beta);
        Store(ref c, 4 * ldc, c40, c41, alpha, beta);
        Store(ref c, 5 * ldc, c50, c51, alpha, beta);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Store(ref double c, int offset, Vector256<double> lo, Vector256<double> hi, double alpha, double beta)
    {
        ref double col = ref Unsafe.Add(ref c, offset);
        Vector256<double> va = Vector256.Create(alpha);
        if (beta == 0)
        {
            (va * lo).StoreUnsafe(ref col);
            (va * hi).StoreUnsafe(ref col, 4);
            return;
        }

        Vector256<double> vb = Vector256.Create(beta);
        Fma.MultiplyAdd(va, lo, vb * Vector256.LoadUnsafe(ref col)).StoreUnsafe(ref col);
        Fma.MultiplyAdd(va, hi, vb * Vector256.LoadUnsafe(ref col, 4)).StoreUnsafe(ref col, 4);
    }

    /// <summary>Plain triple loop for machines without AVX2/FMA.</summary>
    private static void Reference(
        int m, int n, int k, double alpha,
        double[] a, int ao, int lda, bool transposeA,
        double[] b, int bo, int ldb, bool transposeB,
        double beta, double[] c, int co, int ldc)
    {
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i < m; i++)
            {
                double sum = 0;
                for (int p = 0; p < k; p++)
                {
                    double x = transposeA ? a[ao + p + i * lda] : a[ao + i + p * lda];
                    double y = transposeB ? b[bo + j + p * ldb] : b[bo + p + j * ldb];
                    sum += x * y;
                }

                c[co + i + j * ldc] = beta == 0 ? alpha * sum : alpha * sum + beta * c[co + i + j * ldc];
            }
        }
    }
}

using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace Decohere.Numerics;

/// <summary>
/// Repeated exact steps V ← Φ V Φᵀ + Q, μ ← Φ μ of a discretised linear stochastic system (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)), in place on flat row-major arrays.
/// </summary>
/// <remarks>
/// All scratch is allocated in the constructor; <see cref="Step"/> allocates nothing. The new
/// covariance is the upper triangle (i ≤ j) of Φ V Φᵀ + Q mirrored onto the lower one, so it is
/// exactly symmetric whatever rounding does. n = 2 and n = 4 have unrolled paths; larger n uses a
/// register-blocked 4×8 AVX2/FMA kernel for W = Φ V and then the upper blocks of W Φᵀ + Q,
/// about 1.5 n³ multiply-adds per step. Not thread-safe: one stepper per thread.
/// </remarks>
public sealed class CovarianceStepper
{
    private readonly int _n;
    private readonly double[] _phi;
    private readonly double[] _phiT;
    private readonly double[] _q;
    private readonly double[] _work;
    private readonly double[] _meanWork;

    /// <param name="discretization">(Φ, Q) of one step; Q is symmetrised on copy.</param>
    /// <exception cref="ArgumentException">Φ and Q are not square of the same size or have NaN/∞ entries.</exception>
    public CovarianceStepper(Discretization discretization)
    {
        ArgumentNullException.ThrowIfNull(discretization);
        var phi = discretization.Phi;
        var q = discretization.Q;
        ArgumentNullException.ThrowIfNull(phi, nameof(discretization) + ".Phi");
        ArgumentNullException.ThrowIfNull(q, nameof(discretization) + ".Q");
        Validation.RequireSquareFinite(phi, nameof(discretization) + ".Phi");
        Validation.RequireSquareFinite(q, nameof(discretization) + ".Q");
        Validation.RequireSameSize(phi, q, nameof(discretization) + ".Phi", nameof(discretization) + ".Q");

        Discretization = discretization;
        int n = phi.RowCount;
        _n = n;
        _phi = new double[n * n];
        _phiT = new double[n * n];
        _q = new double[n * n];
        _work = new double[n * n];
        _meanWork = new double[n];
        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j < n; j++)
            {
                _phi[i * n + j] = phi[i, j];
                _phiT[j * n + i] = phi[i, j];
                _q[i * n + j] = 0.5 * (q[i, j] + q[j, i]);
            }
        }
    }

    /// <summary>Phase-space dimension n (covariance length n·n, mean length n).</summary>
    public int Dimension => _n;

    /// <summary>The discretisation this stepper applies.</summary>
    public Discretization Discretization { get; }

    /// <summary>
    /// One exact step in place: V ← Φ V Φᵀ + Q (row-major n×n, kept symmetric) and μ ← Φ μ (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)).
    /// </summary>
    /// <exception cref="ArgumentException">A span has the wrong length.</exception>
    public void Step(Span<double> covariance, Span<double> mean)
    {
        StepCovariance(covariance);
        StepMean(mean);
    }

    /// <summary>V ← Φ V Φᵀ + Q in place (row-major n×n); the result is exactly symmetric.</summary>
    /// <exception cref="ArgumentException"><paramref name="covariance"/> does not have length n·n.</exception>
    public void StepCovariance(Span<double> covariance)
    {
        if (covariance.Length != _n * _n)
        {
            throw new ArgumentException(
                $"covariance has length {covariance.Length}, expected {_n * _n} (= {_n}×{_n}).", nameof(covariance));
        }

        switch (_n)
        {
            case 1:
                covariance[0] = _phi[0] * covariance[0] * _phi[0] + _q[0];
                break;
            case 2:
                Step2(covariance);
                break;
            case 4 when Vector256.IsHardwareAccelerated:
                Step4(covariance);
                break;
            default:
                StepGeneral(covariance);
                break;
        }
    }

    /// <summary>μ ← Φ μ in place.</summary>
    /// <exception cref="ArgumentException"><paramref name="mean"/> does not have length n.</exception>
    public void StepMean(Span<double> mean)
    {
        if (mean.Length != _n)
        {
            throw new ArgumentException($"mean has length {mean.Length}, expected {_n}.", nameof(mean));
        }

        int n = _n;
        ReadOnlySpan<double> phi = _phi;
        Span<double> result = _meanWork;
        for (int i = 0; i < n; i++)
        {
            ReadOnlySpan<double> row = phi.Slice(i * n, n);
            double sum = 0;
            for (int k = 0; k < n; k++) sum += row[k] * mean[k];
            result[i] = sum;
        }

        result.CopyTo(mean);
    }

    private void Step2(Span<double> v)
    {
        double[] p = _phi;
        double[] q = _q;
        double v00 = v[0], v01 = v[1], v10 = v[2], v11 = v[3];
        double p00 = p[0], p01 = p[1], p10 = p[2], p11 = p[3];
        double w00 = p00 * v00 + p01 * v10;
        double w01 = p00 * v01 + p01 * v11;
        double w10 = p10 * v00 + p11 * v10;
        double w11 = p10 * v01 + p11 * v11;
        double r01 = w00 * p10 + w01 * p11 + q[1];
        v[0] = w00 * p00 + w01 * p01 + q[0];
        v[1] = r01;
        v[2] = r01;
        v[3] = w10 * p10 + w11 * p11 + q[3];
    }

    private void Step4(Span<double> v)
    {
        ref double vRef = ref MemoryMarshal.GetReference(v);
        ref double p = ref MemoryMarshal.GetArrayDataReference(_phi);
        ref double pt = ref MemoryMarshal.GetArrayDataReference(_phiT);
        ref double q = ref MemoryMarshal.GetArrayDataReference(_q);

        Vector256<double> t0 = Vector256.LoadUnsafe(ref pt, 0);
        Vector256<double> t1 = Vector256.LoadUnsafe(ref pt, 4);
        Vector256<double> t2 = Vector256.LoadUnsafe(ref pt, 8);
        Vector256<double> t3 = Vector256.LoadUnsafe(ref pt, 12);

        // U = V Φᵀ row by row (row k of U = Σ_m V_km · row m of Φᵀ), so that Φ U needs only broadcasts.
        Vector256<double> u0 = RowTimes(ref vRef, 0, t0, t1, t2, t3);
        Vector256<double> u1 = RowTimes(ref vRef, 4, t0, t1, t2, t3);
        Vector256<double> u2 = RowTimes(ref vRef, 8, t0, t1, t2, t3);
        Vector256<double> u3 = RowTimes(ref vRef, 12, t0, t1, t2, t3);

        Vector256<double> r0 = RowTimesAdd(ref p, 0, u0, u1, u2, u3, Vector256.LoadUnsafe(ref q, 0));
        Vector256<double> r1 = RowTimesAdd(ref p, 4, u0, u1, u2, u3, Vector256.LoadUnsafe(ref q, 4));
        Vector256<double> r2 = RowTimesAdd(ref p, 8, u0, u1, u2, u3, Vector256.LoadUnsafe(ref q, 8));
        Vector256<double> r3 = RowTimesAdd(ref p, 12, u0, u1, u2, u3, Vector256.LoadUnsafe(ref q, 12));

        // Mirror the upper triangle in registers so V stays exactly symmetric.
        double r01 = r0.GetElement(1), r02 = r0.GetElement(2), r03 = r0.GetElement(3);
        double r12 = r1.GetElement(2), r13 = r1.GetElement(3), r23 = r2.GetElement(3);
        r1 = Vector256.Create(r01, r1.GetElement(1), r12, r13);
        r2 = Vector256.Create(r02, r12, r2.GetElement(2), r23);
        r3 = Vector256.Create(r03, r13, r23, r3.GetElement(3));

        r0.StoreUnsafe(ref vRef, 0);
        r1.StoreUnsafe(ref vRef, 4);
        r2.StoreUnsafe(ref vRef, 8);
        r3.StoreUnsafe(ref vRef, 12);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> RowTimes(
        ref double m, nuint offset, Vector256<double> b0, Vector256<double> b1, Vector256<double> b2, Vector256<double> b3)
    {
        Vector256<double> acc = Vector256.Create(Unsafe.Add(ref m, offset)) * b0;
        acc = MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 1)), b1, acc);
        acc = MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 2)), b2, acc);
        return MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 3)), b3, acc);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> RowTimesAdd(
        ref double m, nuint offset, Vector256<double> b0, Vector256<double> b1, Vector256<double> b2, Vector256<double> b3,
        Vector256<double> acc)
    {
        acc = MulAdd(Vector256.Create(Unsafe.Add(ref m, offset)), b0, acc);
        acc = MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 1)), b1, acc);
        acc = MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 2)), b2, acc);
        return MulAdd(Vector256.Create(Unsafe.Add(ref m, offset + 3)), b3, acc);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> MulAdd(Vector256<double> x, Vector256<double> y, Vector256<double> acc)
        => Fma.IsSupported ? Fma.MultiplyAdd(x, y, acc) : x * y + acc;

    private void StepGeneral(Span<double> v)
    {
        int n = _n;
        ref double vRef = ref MemoryMarshal.GetReference(v);
        ref double w = ref MemoryMarshal.GetArrayDataReference(_work);
        ref double p = ref MemoryMarshal.GetArrayDataReference(_phi);
        ref double pt = ref MemoryMarshal.GetArrayDataReference(_phiT);
        ref double q = ref MemoryMarshal.GetArrayDataReference(_q);

        // W = Φ V, then V' = W Φᵀ + Q with Φᵀ stored row-major, so both products stream rows.
        MultiplyAdd(ref p, ref vRef, ref Unsafe.NullRef<double>(), ref w, n, upperOnly: false);
        MultiplyAdd(ref w, ref pt, ref q, ref vRef, n, upperOnly: true);

        for (int i = 0; i < n; i++)
        {
            for (int j = i + 1; j < n; j++)
            {
                Unsafe.Add(ref vRef, j * n + i) = Unsafe.Add(ref vRef, i * n + j);
            }
        }
    }

    /// <summary>
    /// C = Init + A·B for row-major n×n (Init may be a null ref for zero); with upperOnly, every entry
    /// with i ≤ j is exact and blocks wholly below the diagonal are skipped. C must alias neither A nor B.
    /// </summary>
    private static void MultiplyAdd(ref double a, ref double b, ref double init, ref double c, int n, bool upperOnly)
    {
        bool hasInit = !Unsafe.IsNullRef(ref init);
        int n8 = Vector256.IsHardwareAccelerated ? n & ~7 : 0;

        for (int j0 = 0; j0 < n8; j0 += 8)
        {
            int iEnd = upperOnly ? Math.Min(n, j0 + 8) : n;
            int i0 = 0;
            for (; i0 + 4 <= iEnd; i0 += 4)
            {
                Kernel4x8(ref a, ref b, ref init, hasInit, ref c, n, i0, j0);
            }

            for (; i0 < iEnd; i0++)
            {
                Kernel1x8(ref a, ref b, ref init, hasInit, ref c, n, i0, j0);
            }
        }

        for (int j = n8; j < n; j++)
        {
            int iEnd = upperOnly ? j + 1 : n;
            for (int i = 0; i < iEnd; i++)
            {
                double sum = hasInit ? Unsafe.Add(ref init, i * n + j) : 0.0;
                ref double aRow = ref Unsafe.Add(ref a, i * n);
                for (int k = 0; k < n; k++)
                {
                    sum += Unsafe.Add(ref aRow, k) * Unsafe.Add(ref b, k * n + j);
                }

                Unsafe.Add(ref c, i * n + j) = sum;
            }
        }
    }

    /// <summary>
    /// 4×8 register block of C = Init + A·B: 8 accumulators hide the FMA latency, each B row panel is
    /// loaded once per 4 rows of A (K. Goto and R. A. van de Geijn, ACM Trans. Math. Softw. 34, 12 (2008)).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Kernel4x8(ref double a, ref double b, ref double init, bool hasInit, ref double c, int n, int i0, int j0)
    {
        nuint stride = (nuint)n;
        nuint c0 = (nuint)(i0 * n + j0);
        Vector256<double> c00, c01, c10, c11, c20, c21, c30, c31;
        if (hasInit)
        {
            c00 = Vector256.LoadUnsafe(ref init, c0);
            c01 = Vector256.LoadUnsafe(ref init, c0 + 4);
            c10 = Vector256.LoadUnsafe(ref init, c0 + stride);
            c11 = Vector256.LoadUnsafe(ref init, c0 + stride + 4);
            c20 = Vector256.LoadUnsafe(ref init, c0 + 2 * stride);
            c21 = Vector256.LoadUnsafe(ref init, c0 + 2 * stride + 4);
            c30 = Vector256.LoadUnsafe(ref init, c0 + 3 * stride);
            c31 = Vector256.LoadUnsafe(ref init, c0 + 3 * stride + 4);
        }
        else
        {
            c00 = c01 = c10 = c11 = c20 = c21 = c30 = c31 = Vector256<double>.Zero;
        }

        ref double a0 = ref Unsafe.Add(ref a, i0 * n);
        ref double a1 = ref Unsafe.Add(ref a0, n);
        ref double a2 = ref Unsafe.Add(ref a1, n);
        ref double a3 = ref Unsafe.Add(ref a2, n);
        ref double bk = ref Unsafe.Add(ref b, j0);
        for (int k = 0; k < n; k++)
        {
            Vector256<double> b0 = Vector256.LoadUnsafe(ref bk);
            Vector256<double> b1 = Vector256.LoadUnsafe(ref bk, 4);
            Vector256<double> x = Vector256.Create(Unsafe.Add(ref a0, k));
            c00 = MulAdd(x, b0, c00);
            c01 = MulAdd(x, b1, c01);
            x = Vector256.Create(Unsafe.Add(ref a1, k));
            c10 = MulAdd(x, b0, c10);
            c11 = MulAdd(x, b1, c11);
            x = Vector256.Create(Unsafe.Add(ref a2, k));
            c20 = MulAdd(x, b0, c20);
            c21 = MulAdd(x, b1, c21);
            x = Vector256.Create(Unsafe.Add(ref a3, k));
            c30 = MulAdd(x, b0, c30);
            c31 = MulAdd(x, b1, c31);
            bk = ref Unsafe.Add(ref bk, n);
        }

        c00.StoreUnsafe(ref c, c0);
        c01.StoreUnsafe(ref c, c0 + 4);
        c10.StoreUnsafe(ref c, c0 + stride);
        c11.StoreUnsafe(ref c, c0 + stride + 4);
        c20.StoreUnsafe(ref c, c0 + 2 * stride);
        c21.StoreUnsafe(ref c, c0 + 2 * stride + 4);
        c30.StoreUnsafe(ref c, c0 + 3 * stride);
        c31.StoreUnsafe(ref c, c0 + 3 * stride + 4);
    }

    /// <summary>Single-row remainder of <see cref="Kernel4x8"/> for n not divisible by 4.</summary>
    private static void Kernel1x8(ref double a, ref double b, ref double init, bool hasInit, ref double c, int n, int i0, int j0)
    {
        nuint c0 = (nuint)(i0 * n + j0);
        Vector256<double> acc0 = hasInit ? Vector256.LoadUnsafe(ref init, c0) : Vector256<double>.Zero;
        Vector256<double> acc1 = hasInit ? Vector256.LoadUnsafe(ref init, c0 + 4) : Vector256<double>.Zero;
        ref double aRow = ref Unsafe.Add(ref a, i0 * n);
        ref double bk = ref Unsafe.Add(ref b, j0);
        for (int k = 0; k < n; k++)
        {
            Vector256<double> x = Vector256.Create(Unsafe.Add(ref aRow, k));
            acc0 = MulAdd(x, Vector256.LoadUnsafe(ref bk), acc0);
            acc1 = MulAdd(x, Vector256.LoadUnsafe(ref bk, 4), acc1);
            bk = ref Unsafe.Add(ref bk, n);
        }

        acc0.StoreUnsafe(ref c, c0);
        acc1.StoreUnsafe(ref c, c0 + 4);
    }
}

namespace Decohere.Numerics;

/// <summary>
/// LU factorisation with partial pivoting, P A = L U, of a column-major n×n array, right-looking and blocked so that almost all
/// work is in <see cref="DenseProduct"/> (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Johns Hopkins (2013), alg. 3.2.3 with 3.4.1).
/// </summary>
/// <remarks>Internal hot path: callers pass square, finite data and own the arrays.</remarks>
internal sealed class DenseLU
{
    // Panel width: the panel and the small triangular solves are level-2 work, n²·Panel in all.
    private const int Panel = 64;

    private readonly double[] _lu;
    private readonly int[] _pivots;
    private readonly int _n;

    private DenseLU(double[] lu, int[] pivots, int n)
    {
        _lu = lu;
        _pivots = pivots;
        _n = n;
    }

    /// <summary>Factorises a copy of the column-major n×n array <paramref name="a"/>.</summary>
    /// <exception cref="InvalidOperationException">A pivot is exactly zero (A singular).</exception>
    public static DenseLU Factor(ReadOnlySpan<double> a, int n)
    {
        double[] lu = a.Slice(0, n * n).ToArray();
        int[] pivots = new int[n];
        for (int k0 = 0; k0 < n; k0 += Panel)
        {
            int kb = Math.Min(Panel, n - k0);
            FactorPanel(lu, pivots, n, k0, kb);
            int rest = n - k0 - kb;
            if (rest == 0) continue;

            // U12 = L11⁻¹ A12 (unit lower triangular), column by column.
            for (int c = k0 + kb; c < n; c++)
            {
                int col = c * n;
                for (int j = k0; j < k0 + kb; j++)
                {
                    double x = lu[j + col];
                    if (x == 0) continue;
                    int lj = j * n;
                    for (int i = j + 1; i < k0 + kb; i++) lu[i + col] -= lu[i + lj] * x;
                }
            }

            // Schur complement A22 ← A22 − L21 U12 (Golub and Van Loan, alg. 3.2.3, step 3).
            DenseProduct.Multiply(rest, rest, kb, -1.0,
                lu, (k0 + kb) + k0 * n, n, false,
                lu, k0 + (k0 + kb) * n, n, false,
                1.0, lu, (k0 + kb) + (k0 + kb) * n, n);
        }

        return new DenseLU(lu, pivots, n);
    }

    /// <summary>Unblocked elimination of columns k0..k0+kb−1 with row interchanges applied to the whole rows.</summary>
    private static void FactorPanel(double[] lu, int[] pivots, int n, int k0, int kb)
    {
        for (int j = k0; j < k0 + kb; j++)
        {
            int colJ = j * n;
            int p = j;
            double best = Math.Abs(lu[j + colJ]);
            for (int i = j + 1; i < n; i++)
            {
                double v = Math.Abs(lu[i + colJ]);
                if (v > best)
                {
                    best = v;
                    p = i;
                }
            }

            pivots[j] = p;
            if (best == 0)
            {
                throw new InvalidOperationException($"matrix is singular: no nonzero pivot in column {j}.");
            }

            if (p != j)
            {
                for (int c = 0; c < n; c++) (lu[j + c * n], lu[p + c * n]) = (lu[p + c * n], lu[j + c * n]);
            }

            double inv = 1.0 / lu[j + colJ];
            for (int i = j + 1; i < n; i++) lu[i + colJ] *= inv;
            for (int c = j + 1; c < k0 + kb; c++)
            {
                int col = c * n;
                double x = lu[j + col];
                if (x == 0) continue;
                for (int i = j + 1; i < n; i++) lu[i + col] -= lu[i + colJ] * x;
            }
        }
    }

    private static void ForColumns(int r, long work, Action<int> body)
    {
        if (work < 1L << 20 || Environment.ProcessorCount == 1)
        {
            for (int c = 0; c < r; c++) body(c);
        }
        else
        {
            Parallel.For(0, r, body);
        }
    }

    /// <summary>Overwrites the column-major n×r array <paramref name="b"/> with A⁻¹ B.</summary>
    public void SolveInPlace(double[] b, int r)
    {
        int n = _n;
        double[] lu = _lu;
        for (int j = 0; j < n; j++)
        {
            int p = _pivots[j];
            if (p == j) continue;
            for (int c = 0; c < r; c++) (b[j + c * n], b[p + c * n]) = (b[p + c * n], b[j + c * n]);
        }

        // Forward substitution with unit L, one panel at a time; the update below the panel is a product.
        for (int k0 = 0; k0 < n; k0 += Panel)
        {
            int kb = Math.Min(Panel, n - k0);
            ForColumns(r, (long)kb * kb * r, c =>
            {
                int col = c * n;
                for (int j = k0; j < k0 + kb; j++)
                {
                    double x = b[j + col];
                    if (x == 0) continue;
                    int lj = j * n;
                    for (int i = j + 1; i < k0 + kb; i++) b[i + col] -= lu[i + lj] * x;
                }
            });
            int rest = n - k0 - kb;
            if (rest > 0)
            {
                DenseProduct.Multiply(rest, r, kb, -1.0, lu, (k0 + kb) + k0 * n, n, false, b, k0, n, false, 1.0, b, k0 + kb, n);
            }
        }

        // Back substitution with U, last panel first.
        for (int k0 = (n - 1) / Panel * Panel; k0 >= 0; k0 -= Panel)
        {
            int kb = Math.Min(Panel, n - k0);
            ForColumns(r, (long)kb * kb * r, c =>
            {
                int col = c * n;
                for (int j = k0 + kb - 1; j >= k0; j--)
                {
                    int uj = j * n;
                    double x = b[j + col] / lu[j + uj];
                    b[j + col] = x;
                    if (x == 0) continue;
                    for (int i = k0; i < j; i++) b[i + col] -= lu[i + uj] * x;
                }
            });
            if (k0 > 0)
            {
                DenseProduct.Multiply(k0, r, kb, -1.0, lu, k0 * n, n, false, b, k0, n, false, 1.0, b, 0, n);
            }
        }
    }
}

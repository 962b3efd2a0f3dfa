namespace Decohere.Numerics;

/// <summary>
/// T Y + Y Tᵀ = C for upper quasi-triangular T (a real Schur form) and symmetric C, by block back substitution over the 1×1 and
/// 2×2 diagonal blocks (R. H. Bartels and G. W. Stewart, Commun. ACM 15, 820 (1972), the reduced equation of §2).
/// </summary>
internal static class QuasiTriangularLyapunov
{
    /// <summary>Overwrites the row-major symmetric n×n <paramref name="c"/> with the symmetric Y.</summary>
    /// <param name="t">T, row-major n×n.</param>
    /// <param name="blockStarts">First index of each diagonal block of T, then n.</param>
    /// <param name="c">C on entry (symmetric), Y on return.</param>
    /// <param name="n">Dimension.</param>
    /// <returns>Number of 1×1/2×2 block systems that were nearly singular and perturbed.</returns>
    public static int Solve(double[] t, int[] blockStarts, double[] c, int n)
    {
        double tNorm = 0;
        foreach (double entry in t) tNorm = Math.Max(tNorm, Math.Abs(entry));
        // LAPACK's dtrsyl floor for the small systems: never divide by less than ε·max|T| (or the smallest normal number).
        double smallest = Math.Max(Math.ScaleB(1.0, -52) * tNorm, double.Epsilon * 1e300);
        int perturbed = 0;
        int blocks = blockStarts.Length - 1;
        var row = new double[n];
        Span<double> rhs = stackalloc double[4];
        Span<double> x = stackalloc double[4];
        Span<double> m = stackalloc double[16];

        // Block rows K from the bottom; in row K, blocks L from the right down to K. Everything right of or below (K, L) is known.
        for (int kb = blocks - 1; kb >= 0; kb--)
        {
            int k0 = blockStarts[kb], k1 = blockStarts[kb + 1];
            int bk = k1 - k0;

            // C[K, l] −= Σ_{m ≥ k1} T[K, m] Y[m, l] for l ≥ k1: rows m > K of Y are final.
            for (int r = k0; r < k1; r++)
            {
                Span<double> target = c.AsSpan(r * n + k1, n - k1);
                for (int mm = k1; mm < n; mm++)
                {
                    double tr = t[r * n + mm];
                    if (tr != 0) RealSchur.Axpy(-tr, c.AsSpan(mm * n + k1, n - k1), target);
                }
            }

            for (int lb = blocks - 1; lb >= kb; lb--)
            {
                int l0 = blockStarts[lb], l1 = blockStarts[lb + 1];
                int bl = l1 - l0;
                for (int r = 0; r < bk; r++)
                {
                    for (int col = 0; col < bl; col++)
                    {
                        int i = k0 + r, j = l0 + col;
                        // − Σ_{m ≥ l1} Y[i, m] T[j, m]: Y[K, m] for m ≥ l1 was solved earlier in this row.
                        double value = c[i * n + j] - RealSchur.Dot(c.AsSpan(i * n + l1, n - l1), t.AsSpan(j * n + l1, n - l1));
                        if (lb == kb)
                        {
                            // The diagonal block also needs − Σ_{m ≥ k1} T[i, m] Y[m, j], with Y[m, j] = Y[j, m] just solved.
                            value -= RealSchur.Dot(t.AsSpan(i * n + k1, n - k1), c.AsSpan(j * n + k1, n - k1));
                        }

                        rhs[r * bl + col] = value;
                    }
                }

                perturbed += SolveSmall(t, n, k0, bk, l0, bl, rhs, x, m, smallest);
                for (int r = 0; r < bk; r++)
                {
                    for (int col = 0; col < bl; col++)
                    {
                        c[(k0 + r) * n + l0 + col] = x[r * bl + col];
                        c[(l0 + col) * n + k0 + r] = x[r * bl + col];
                    }
                }
            }
        }

        return perturbed;
    }

    /// <summary>T_KK X + X T_LLᵀ = R for X of size bk×bl (at most 4 unknowns), Gaussian elimination with complete pivoting.</summary>
    private static int SolveSmall(double[] t, int n, int k0, int bk, int l0, int bl, Span<double> rhs, Span<double> x, Span<double> m, double smallest)
    {
        int size = bk * bl;
        m.Slice(0, size * size).Clear();
        for (int r = 0; r < bk; r++)
        {
            for (int col = 0; col < bl; col++)
            {
                int eq = r * bl + col;
                for (int rr = 0; rr < bk; rr++) m[eq * size + rr * bl + col] += t[(k0 + r) * n + k0 + rr];
                for (int cc = 0; cc < bl; cc++) m[eq * size + r * bl + cc] += t[(l0 + col) * n + l0 + cc];
            }
        }

        if (size == 1)
        {
            double d = m[0];
            int bad = 0;
            if (Math.Abs(d) < smallest)
            {
                d = d < 0 ? -smallest : smallest;
                bad = 1;
            }

            x[0] = rhs[0] / d;
            return bad;
        }

        Span<int> perm = stackalloc int[4];
        for (int i = 0; i < size; i++) perm[i] = i;
        int perturbed = 0;
        for (int p = 0; p < size; p++)
        {
            int pr = p, pc = p;
            double best = -1;
            for (int i = p; i < size; i++)
            {
                for (int j = p; j < size; j++)
                {
                    double v = Math.Abs(m[i * size + j]);
                    if (v > best)
                    {
                        best = v;
                        pr = i;
                        pc = j;
                    }
                }
            }

            if (pr != p)
            {
                for (int j = 0; j < size; j++) (m[p * size + j], m[pr * size + j]) = (m[pr * size + j], m[p * size + j]);
                (rhs[p], rhs[pr]) = (rhs[pr], rhs[p]);
            }

            if (pc != p)
            {
                for (int i = 0; i < size; i++) (m[i * size + p], m[i * size + pc]) = (m[i * size + pc], m[i * size + p]);
                (perm[p], perm[pc]) = (perm[pc], perm[p]);
            }

            if (best < smallest)
            {
                m[p * size + p] = smallest;
                perturbed = 1;
            }

            for (int i = p + 1; i < size; i++)
            {
                double f = m[i * size + p] / m[p * size + p];
                if (f == 0) continue;
                for (int j = p; j < size; j++) m[i * size + j] -= f * m[p * size + j];
                rhs[i] -= f * rhs[p];
            }
        }

        Span<double> y = stackalloc double[4];
        for (int i = size - 1; i >= 0; i--)
        {
            double s = rhs[i];
            for (int j = i + 1; j < size; j++) s -= m[i * size + j] * y[j];
            y[i] = s / m[i * size + i];
        }

        for (int i = 0; i < size; i++) x[perm[i]] = y[i];
        return perturbed;
    }
}

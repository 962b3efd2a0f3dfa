using Decohere.Numerics;

namespace Decohere.Analyses.Lattices;

/// <summary>A fitted Lorentzian linewidth (full width at half maximum, Hz) and its standard error.</summary>
public readonly record struct LinewidthEstimate(double LinewidthHz, double LinewidthErrHz, double CentreHz);

/// <summary>
/// A drum's averaged power spectrum as a spectrum analyser records it, and the Lorentzian fit a lab makes to it. One
/// periodogram bin of a Gaussian process is exponentially distributed about the true spectral density, so the mean of
/// M of them is Gamma distributed with shape M and mean S (common practice; e.g. P. D. Welch, IEEE Trans. Audio
/// Electroacoust. 15, 70 (1967)). The fit is weighted least squares with the model's own variance S²/M per bin,
/// iterated (Levenberg–Marquardt: K. Levenberg, Q. Appl. Math. 2, 164 (1944); D. W. Marquardt, J. SIAM 11, 431 (1963)).
/// </summary>
public static class LorentzianFit
{
    /// <summary>Simulates the averaged spectrum of a Lorentzian of the given width and centre and fits it; null when the fit fails.</summary>
    public static LinewidthEstimate? Measure(double widthHz, double centreHz, Decohere.Analyses.Lattices.SpectroscopySettings s, ref RandomStream random)
    {
        int p = s.Points;
        var f = new double[p];
        var y = new double[p];
        for (int i = 0; i < p; i++)
        {
            f[i] = centreHz + widthHz * (-4 + 8.0 * i / (p - 1));
            double u = 2 * (f[i] - centreHz) / widthHz;
            y[i] = (1 / (1 + u * u) + s.Floor) * Gamma(s.Averages, ref random) / s.Averages;
        }
        return Fit(f, y, s.Averages);
    }

    /// <summary>Fits A/(1 + (2(f − f₀)/w)²) + B to an averaged spectrum of <paramref name="averages"/> averages.</summary>
    public static LinewidthEstimate? Fit(double[] f, double[] y, int averages)
    {
        int n = f.Length;
        double lo = y.Min(), hi = y.Max();
        int peak = Array.IndexOf(y, hi);
        double half = (hi + lo) / 2;
        double step = (f[^1] - f[0]) / (n - 1);
        double[] b = [hi - lo, f[peak], Math.Max(step, y.Count(v => v > half) * step), lo];
        var weights = new double[n];
        var jtj = new double[4, 4];
        var jtr = new double[4];
        // Iteratively reweighted: the variance of each bin, S²/M, is taken from the model at the last estimate and held
        // fixed while Levenberg–Marquardt minimises the weighted squares; repeated until the width settles.
        for (int outer = 0; outer < 30; outer++)
        {
            for (int i = 0; i < n; i++)
            {
                double m = Model(b, f[i], out _, out _);
                weights[i] = m > 0 ? averages / (m * m) : averages / (hi * hi);
            }
            double width = b[2];
            double lambda = 1e-3, cost = Squares(b, f, y, weights);
            for (int iteration = 0; iteration < 100; iteration++)
            {
                Normal(b, f, y, weights, jtj, jtr);
                double[]? trial = null;
                double c = cost;
                for (int attempt = 0; attempt < 30; attempt++)
                {
                    var damped = (double[,])jtj.Clone();
                    for (int i = 0; i < 4; i++) damped[i, i] *= 1 + lambda;
                    var delta = Solve(damped, jtr);
                    var candidate = delta is null ? null : b.Select((v, i) => v + delta[i]).ToArray();
                    c = candidate is not null && candidate[2] > 0 ? Squares(candidate, f, y, weights) : double.PositiveInfinity;
                    if (c <= cost) { trial = candidate; lambda = Math.Max(lambda / 10, 1e-12); break; }
                    lambda *= 10;
                }
                if (trial is null) break;
                bool settled = cost - c <= 1e-12 * cost;
                b = trial;
                cost = c;
                if (settled) break;
            }
            if (Math.Abs(b[2] - width) <= 1e-7 * b[2]) return Finish(b, f, weights);
        }
        return null;
    }

    private static LinewidthEstimate? Finish(double[] b, double[] f, double[] weights)
    {
        var jtj = new double[4, 4];
        Normal(b, f, new double[f.Length], weights, jtj, new double[4]);
        var e = new double[4];
        e[2] = 1;
        var column = Solve(jtj, e);
        if (column is null || !(column[2] > 0) || !(b[2] > 0) || !double.IsFinite(b[2])) return null;
        return new LinewidthEstimate(b[2], Math.Sqrt(column[2]), b[1]);
    }

    private static double Model(double[] b, double f, out double l, out double u)
    {
        u = 2 * (f - b[1]) / b[2];
        l = 1 / (1 + u * u);
        return b[0] * l + b[3];
    }

    private static double Squares(double[] b, double[] f, double[] y, double[] weights)
    {
        double sum = 0;
        for (int i = 0; i < f.Length; i++)
        {
            double r = y[i] - Model(b, f[i], out _, out _);
            sum += weights[i] * r * r;
        }
        return sum;
    }

    // Gauss–Newton normal equations JᵀWJ, JᵀW r of the weighted residuals.
    private static void Normal(double[] b, double[] f, double[] y, double[] weights, double[,] jtj, double[] jtr)
    {
        Array.Clear(jtj);
        Array.Clear(jtr);
        Span<double> j = stackalloc double[4];
        for (int i = 0; i < f.Length; i++)
        {
            double m = Model(b, f[i], out double l, out double u);
            double w = weights[i];
            j[0] = l;
            j[1] = 4 * b[0] * u * l * l / b[2];
            j[2] = 2 * b[0] * u * u * l * l / b[2];
            j[3] = 1;
            for (int r = 0; r < 4; r++)
            {
                jtr[r] += w * j[r] * (y[i] - m);
                for (int c = 0; c < 4; c++) jtj[r, c] += w * j[r] * j[c];
            }
        }
    }

    // 4×4 Gaussian elimination with partial pivoting; null when singular.
    private static double[]? Solve(double[,] a, double[] rhs)
    {
        const int n = 4;
        var m = (double[,])a.Clone();
        var x = (double[])rhs.Clone();
        for (int c = 0; c < n; c++)
        {
            int p = c;
            for (int r = c + 1; r < n; r++) if (Math.Abs(m[r, c]) > Math.Abs(m[p, c])) p = r;
            if (!(Math.Abs(m[p, c]) > 0)) return null;
            if (p != c)
            {
                for (int k = 0; k < n; k++) (m[c, k], m[p, k]) = (m[p, k], m[c, k]);
                (x[c], x[p]) = (x[p], x[c]);
            }
            for (int r = c + 1; r < n; r++)
            {
                double factor = m[r, c] / m[c, c];
                for (int k = c; k < n; k++) m[r, k] -= factor * m[c, k];
                x[r] -= factor * x[c];
            }
        }
        for (int r = n - 1; r >= 0; r--)
        {
            for (int k = r + 1; k < n; k++) x[r] -= m[r, k] * x[k];
            x[r] /= m[r, r];
        }
        return x.All(double.IsFinite) ? x : null;
    }

    /// <summary>A Gamma(shape, 1) deviate for shape ≥ 1 (G. Marsaglia, W. W. Tsang, ACM Trans. Math. Softw. 26, 363 (2000)).</summary>
    public static double Gamma(double shape, ref RandomStream random)
    {
        double d = shape - 1.0 / 3, c = 1 / Math.Sqrt(9 * d);
        while (true)
        {
            double x = random.NextNormal(), v = 1 + c * x;
            if (v <= 0) continue;
            v = v * v * v;
            double u = random.NextOpenDouble();
            if (Math.Log(u) < 0.5 * x * x + d - d * v + d * Math.Log(v)) return d * v;
        }
    }
}

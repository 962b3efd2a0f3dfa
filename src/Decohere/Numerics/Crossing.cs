using MathNet.Numerics.RootFinding;

namespace Decohere.Numerics;

/// <summary>
/// First sign change of a function along a delay axis: a coarse grid brackets it, then Brent's method refines it
/// (R. P. Brent, Algorithms for Minimization without Derivatives, Prentice-Hall 1973, ch. 4; MathNet.Numerics' implementation).
/// </summary>
public static class Crossing
{
    /// <summary>
    /// The first τ ≥ 0 where <paramref name="f"/> turns from negative to ≥ 0, or null when it stays negative up to
    /// <paramref name="horizon"/>. The grid is uniform with step <paramref name="step"/> up to <paramref name="uniformUntil"/>,
    /// then grows by a factor 1.25 per point (the dynamics past the drives relax on ever longer scales). A crossing
    /// that turns back within one grid step is not seen; the step is a fraction of the expected lifetime.
    /// <paramref name="relativeTolerance"/> is on τ.
    /// </summary>
    public static double? First(Func<double, double> f, double step, double uniformUntil, double horizon, double relativeTolerance = 1e-9)
    {
        if (!(step > 0) || !double.IsFinite(step)) throw new ArgumentOutOfRangeException(nameof(step), step, "grid step must be > 0");
        double a = 0, fa = f(0);
        if (fa >= 0) return 0;
        double h = step;
        for (int k = 0; k < 100_000 && a < horizon; k++)
        {
            double b = Math.Min(a + h, horizon);
            double fb = f(b);
            if (fb >= 0) return Refine(f, a, b, fa, fb, relativeTolerance);
            a = b;
            fa = fb;
            if (a >= uniformUntil) h *= 1.25;
        }
        return null;
    }

    /// <summary>Refines a bracket [a, b] with f(a) &lt; 0 ≤ f(b) to the relative tolerance; falls back to bisection if Brent stalls.</summary>
    public static double Refine(Func<double, double> f, double a, double b, double fa, double fb, double relativeTolerance)
    {
        if (fb == 0) return b;
        // MathNet's accuracy is absolute in x (and also stops when |f| < accuracy); a hundredth of the wanted relative width keeps both tight.
        double accuracy = 0.01 * relativeTolerance * b;
        if (Brent.TryFindRoot(f, a, b, accuracy, 200, out double root) && root >= a && root <= b) return root;
        for (int i = 0; i < 200 && b - a > relativeTolerance * b; i++)
        {
            double m = 0.5 * (a + b);
            double fm = f(m);
            if (fm >= 0) b = m; else a = m;
        }
        return 0.5 * (a + b);
    }
}

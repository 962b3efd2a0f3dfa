namespace Decohere.Reports.Plotting;

/// <summary>
/// Reduces a long series to what a screen can show: per pixel column the points holding its minimum and maximum, in
/// their original order, so the drawn envelope is exactly the full series' (the min/max decimation of time-series
/// plotting, common practice). 200,000 points become at most 2·columns + 2.
/// </summary>
public static class Decimation
{
    /// <summary>The decimated series for <paramref name="columns"/> columns across the x range of the data; x must be non-decreasing.</summary>
    public static (double[] X, double[] Y) MinMax(ReadOnlySpan<double> x, ReadOnlySpan<double> y, int columns)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(columns, 1);
        if (x.Length != y.Length) throw new ArgumentException("x and y differ in length", nameof(y));
        int n = x.Length;
        if (n <= 2 * columns + 2) return (x.ToArray(), y.ToArray());
        double x0 = x[0], width = (x[n - 1] - x0) / columns;
        var keep = new List<int>(2 * columns + 2) { 0 };
        int start = 0;
        while (start < n)
        {
            int column = width > 0 ? Math.Min((int)((x[start] - x0) / width), columns - 1) : 0;
            int lo = start, hi = start, k = start;
            for (; k < n && (width > 0 ? Math.Min((int)((x[k] - x0) / width), columns - 1) : 0) == column; k++)
            {
                // NaN (a gap) never wins either comparison, so a gap keeps its neighbours.
                if (y[k] < y[lo]) lo = k;
                if (y[k] > y[hi]) hi = k;
            }
            if (lo > hi) (lo, hi) = (hi, lo);
            if (lo != keep[^1]) keep.Add(lo);
            if (hi != keep[^1]) keep.Add(hi);
            start = k;
        }
        if (keep[^1] != n - 1) keep.Add(n - 1);
        var (dx, dy) = (new double[keep.Count], new double[keep.Count]);
        for (int k = 0; k < keep.Count; k++) (dx[k], dy[k]) = (x[keep[k]], y[keep[k]]);
        return (dx, dy);
    }
}

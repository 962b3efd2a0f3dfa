namespace Decohere.Reports.Plotting;

/// <summary>
/// One contour level of a function sampled on a rectangular grid, by marching squares (the two-dimensional case of
/// W. E. Lorensen, H. E. Cline, "Marching cubes", SIGGRAPH Comput. Graph. 21, 163 (1987)): each cell whose corners lie
/// on both sides of the level contributes a segment between the edge crossings, placed by linear interpolation. A cell
/// with a missing (NaN) corner contributes nothing; a saddle cell is resolved by its centre value.
/// </summary>
public static class Contours
{
    /// <summary>The segments where z crosses <paramref name="level"/>; z[i, j] is the value at (x[i], y[j]).</summary>
    public static List<(double X1, double Y1, double X2, double Y2)> Segments(double[] x, double[] y, double[,] z, double level)
    {
        var segments = new List<(double, double, double, double)>();
        for (int i = 0; i + 1 < x.Length; i++)
            for (int j = 0; j + 1 < y.Length; j++)
            {
                // Corners counter-clockwise from (i, j).
                double[] cx = [x[i], x[i + 1], x[i + 1], x[i]], cy = [y[j], y[j], y[j + 1], y[j + 1]];
                double[] cz = [z[i, j], z[i + 1, j], z[i + 1, j + 1], z[i, j + 1]];
                if (cz.Any(v => !double.IsFinite(v))) continue;
                var cuts = new List<(double X, double Y)>(4);
                for (int e = 0; e < 4; e++)
                {
                    int f = (e + 1) % 4;
                    bool above = cz[e] >= level, next = cz[f] >= level;
                    if (above == next) continue;
                    double t = (level - cz[e]) / (cz[f] - cz[e]);
                    cuts.Add((cx[e] + t * (cx[f] - cx[e]), cy[e] + t * (cy[f] - cy[e])));
                }
                if (cuts.Count == 2) segments.Add((cuts[0].X, cuts[0].Y, cuts[1].X, cuts[1].Y));
                else if (cuts.Count == 4)
                {
                    // Saddle: the centre decides which pairs of crossings connect.
                    bool centre = cz.Average() >= level, first = cz[0] >= level;
                    if (centre == first)
                    {
                        segments.Add((cuts[0].X, cuts[0].Y, cuts[1].X, cuts[1].Y));
                        segments.Add((cuts[2].X, cuts[2].Y, cuts[3].X, cuts[3].Y));
                    }
                    else
                    {
                        segments.Add((cuts[3].X, cuts[3].Y, cuts[0].X, cuts[0].Y));
                        segments.Add((cuts[1].X, cuts[1].Y, cuts[2].X, cuts[2].Y));
                    }
                }
            }
        return segments;
    }
}

using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Sampling;

/// <summary>
/// A square factor L with L Lᵀ = V for drawing R = μ + L ξ. Cholesky when V is positive definite; otherwise (pure states,
/// a noiseless step, rounding) the symmetric eigen-decomposition V = U Λ Uᵀ with negative eigenvalues clipped to zero,
/// L = U Λ^½ (G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed., secs. 4.2 and 8.1).
/// </summary>
public static class GaussianFactor
{
    /// <summary>The factor of a symmetric positive semi-definite matrix, row-major n × n.</summary>
    /// <param name="covariance">Symmetric; asymmetry from rounding is averaged away first.</param>
    /// <param name="clipped">The most negative eigenvalue that was set to zero (0 when none).</param>
    public static double[] Of(Matrix<double> covariance, out double clipped)
    {
        int n = covariance.RowCount;
        clipped = 0;
        if (n == 0) return [];
        var v = (covariance + covariance.Transpose()) * 0.5;
        if (v.ForAll(e => e == 0)) return new double[n * n];
        var l = TryCholesky(v);
        if (l is not null) return l;
        var evd = v.Evd(Symmetricity.Symmetric);
        var result = new double[n * n];
        for (int k = 0; k < n; k++)
        {
            double lambda = evd.EigenValues[k].Real;
            if (lambda < 0) { clipped = Math.Min(clipped, lambda); lambda = 0; }
            double root = Math.Sqrt(lambda);
            for (int r = 0; r < n; r++) result[r * n + k] = evd.EigenVectors[r, k] * root;
        }
        return result;
    }

    /// <summary>The factor without reporting clipping.</summary>
    public static double[] Of(Matrix<double> covariance) => Of(covariance, out _);

    /// <summary>Lower-triangular Cholesky factor, or null when a pivot is not clearly positive.</summary>
    private static double[]? TryCholesky(Matrix<double> v)
    {
        int n = v.RowCount;
        double scale = 0;
        for (int i = 0; i < n; i++) scale = Math.Max(scale, Math.Abs(v[i, i]));
        var l = new double[n * n];
        for (int j = 0; j < n; j++)
        {
            double d = v[j, j];
            for (int k = 0; k < j; k++) d -= l[j * n + k] * l[j * n + k];
            // A pivot near rounding level means V is singular to working precision: the eigen route is exact there.
            if (!(d > 1e-13 * scale)) return null;
            double root = Math.Sqrt(d);
            l[j * n + j] = root;
            for (int i = j + 1; i < n; i++)
            {
                double s = v[i, j];
                for (int k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
                l[i * n + j] = s / root;
            }
        }
        return l;
    }
}

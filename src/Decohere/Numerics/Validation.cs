using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Numerics;

/// <summary>
/// Input checks shared by the public numerical entry points; each error names the argument.
/// </summary>
internal static class Validation
{
    public static void RequireSquareFinite(Matrix<double> m, string name)
    {
        if (m.RowCount == 0 || m.ColumnCount == 0)
        {
            throw new ArgumentException($"{name} must not be empty.", name);
        }

        if (m.RowCount != m.ColumnCount)
        {
            throw new ArgumentException(
                $"{name} must be square, but is {m.RowCount}×{m.ColumnCount}.", name);
        }

        for (int i = 0; i < m.RowCount; i++)
        {
            for (int j = 0; j < m.ColumnCount; j++)
            {
                double x = m[i, j];
                if (!double.IsFinite(x))
                {
                    throw new ArgumentException($"{name}[{i},{j}] is {x}; entries must be finite.", name);
                }
            }
        }
    }

    public static void RequireSameSize(Matrix<double> a, Matrix<double> d, string nameA, string nameD)
    {
        if (d.RowCount != a.RowCount || d.ColumnCount != a.ColumnCount)
        {
            throw new ArgumentException(
                $"{nameD} is {d.RowCount}×{d.ColumnCount} but {nameA} is {a.RowCount}×{a.ColumnCount}; they must match.",
                nameD);
        }
    }

    /// <summary>
    /// Returns (D + Dᵀ)/2 of a column-major n×n array, refusing a D whose antisymmetric part is more than rounding noise:
    /// a diffusion matrix is symmetric, and an asymmetric one signals a model-building bug.
    /// </summary>
    public static double[] SymmetrisedDiffusion(double[] d, int n, string name)
    {
        double[] symmetric = new double[n * n];
        double asymMax = 0;
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i < n; i++)
            {
                symmetric[i + j * n] = (d[i + j * n] + d[j + i * n]) * 0.5;
                asymMax = Math.Max(asymMax, Math.Abs(d[i + j * n] - d[j + i * n]));
            }
        }

        if (asymMax == 0) return symmetric;
        // ‖D − Dᵀ‖_F, scaled by its largest entry as in FrobeniusNorm.
        double sum = 0;
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i < n; i++)
            {
                double y = (d[i + j * n] - d[j + i * n]) / asymMax;
                sum += y * y;
            }
        }

        double scale = FrobeniusNorm(d);
        double asym = double.IsInfinity(asymMax) ? asymMax : asymMax * Math.Sqrt(sum);
        if (asym > 1e-8 * scale)
        {
            throw new ArgumentException(
                $"{name} must be symmetric; ||{name} − {name}ᵀ||_F / ||{name}||_F = {asym / scale:G3}.", name);
        }

        return symmetric;
    }

    /// <inheritdoc cref="SymmetrisedDiffusion(double[], int, string)"/>
    public static Matrix<double> SymmetrisedDiffusion(Matrix<double> d, string name) =>
        Matrix<double>.Build.Dense(d.RowCount, d.RowCount, SymmetrisedDiffusion(d.AsColumnMajorArray() ?? d.ToColumnMajorArray(), d.RowCount, name));

    public static Matrix<double> Symmetrise(Matrix<double> m) => (m + m.Transpose()).Multiply(0.5);

    /// <summary>
    /// ‖M‖_F in O(n²), scaled by max |m_ij| against overflow; MathNet's dense FrobeniusNorm forms M Mᴴ, O(n³).
    /// </summary>
    public static double FrobeniusNorm(Matrix<double> m) => FrobeniusNorm(m.AsColumnMajorArray() ?? m.ToColumnMajorArray());

    /// <summary>‖M‖_F of the entries, scaled by max |m_ij| against overflow.</summary>
    public static double FrobeniusNorm(ReadOnlySpan<double> entries)
    {
        double max = 0;
        foreach (double x in entries) max = Math.Max(max, Math.Abs(x));
        if (max == 0 || double.IsInfinity(max)) return max;
        double sum = 0;
        foreach (double x in entries)
        {
            double y = x / max;
            sum += y * y;
        }

        return max * Math.Sqrt(sum);
    }
}

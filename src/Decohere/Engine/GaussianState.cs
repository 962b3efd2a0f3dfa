using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using Decohere.Core;

namespace Decohere.Engine;

/// <summary>A Gaussian state: mean quadratures μ and covariance V_kl = ½⟨{ΔR_k, ΔR_l}⟩ over the listed modes.</summary>
public sealed record GaussianState(Vector<double> Mean, Matrix<double> Covariance, ImmutableArray<string> ModeNames)
{
    /// <summary>The moments of one mode (by position in the state vector).</summary>
    public ModeMoments Moments(int mode) => ModeMoments.From(
        Covariance[2 * mode, 2 * mode], Covariance[2 * mode + 1, 2 * mode + 1], Covariance[2 * mode, 2 * mode + 1],
        Mean[2 * mode], Mean[2 * mode + 1]);

    /// <summary>The moments of one mode (by name).</summary>
    public ModeMoments Moments(string mode) => Moments(ModeNames.IndexOf(mode));

    /// <summary>
    /// Smallest eigenvalue of V + iΩ/2, which is ≥ 0 for every physical state (Robertson–Schrödinger uncertainty relation;
    /// A. Serafini, Quantum Continuous Variables, CRC Press 2017, sec. 3.5).
    /// </summary>
    public double UncertaintyMargin()
    {
        int n = Covariance.RowCount;
        // V + iΩ/2 is Hermitian; its eigenvalues are those of the real symmetric [[V, −Ω/2], [Ω/2, V]] (each twice).
        var omega = Model.QuadraticSystem.Symplectic(n / 2);
        var big = Matrix<double>.Build.Dense(2 * n, 2 * n);
        big.SetSubMatrix(0, 0, Covariance);
        big.SetSubMatrix(n, n, Covariance);
        big.SetSubMatrix(0, n, -omega * 0.5);
        big.SetSubMatrix(n, 0, omega * 0.5);
        big = (big + big.Transpose()) * 0.5;
        return big.Evd(Symmetricity.Symmetric).EigenValues.Min(e => e.Real);
    }
}

/// <summary>
/// Moments of a single mode. Zero-point variance is ½; squeezing_db = 10·log10(½ / var_min);
/// angle_rad is the direction of the minimum-variance quadrature from x towards p, in (−π/2, π/2].
/// </summary>
public readonly record struct ModeMoments(
    double VarX, double VarP, double CovXP, double MeanX, double MeanP,
    double VarMin, double VarMax, double AngleRad, double Occupancy, double SqueezingDb)
{
    /// <summary>Derives the eigen-decomposition, occupancy and squeezing of a 2×2 block and mean.</summary>
    public static ModeMoments From(double varX, double varP, double covXP, double meanX, double meanP)
    {
        var (varMin, varMax) = Physics.PrincipalVariances(varX, varP, covXP);
        // The major axis is at ½·atan2(2c, a − b); the minor one is a quarter turn from it.
        double angle = 0.5 * Math.Atan2(2 * covXP, varX - varP) + Math.PI / 2;
        while (angle > Math.PI / 2) angle -= Math.PI;
        while (angle <= -Math.PI / 2) angle += Math.PI;
        if (varX == varP && covXP == 0) angle = 0;
        return new ModeMoments(varX, varP, covXP, meanX, meanP, varMin, varMax, angle,
            Physics.ModeOccupancy(varX, varP, meanX, meanP), Physics.SqueezingDb(varMin));
    }
}

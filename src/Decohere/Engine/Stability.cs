using MathNet.Numerics.LinearAlgebra;
using System.Numerics;

namespace Decohere.Engine;

/// <summary>
/// Stability of a stage from the eigenvalues of its drift A: the stage relaxes to a steady state when every
/// Re λ &lt; 0 (slowest decay rate −max Re λ); otherwise it amplifies at growth rate max Re λ.
/// </summary>
public sealed record Stability(double MaxRealPart, double MinRealPart, double MaxImaginaryPart)
{
    /// <summary>True when every eigenvalue has negative real part (up to rounding relative to the fastest rate).</summary>
    public bool IsStable => MaxRealPart < -1e-13 * Math.Max(Math.Abs(MinRealPart), Math.Abs(MaxImaginaryPart));

    /// <summary>Slowest decay rate (s⁻¹) of a stable stage.</summary>
    public double SlowestDecayRate => -MaxRealPart;

    /// <summary>Fastest decay rate (s⁻¹).</summary>
    public double FastestDecayRate => -MinRealPart;

    /// <summary>Growth rate (s⁻¹) of an unstable stage; zero or negative when stable.</summary>
    public double GrowthRate => MaxRealPart;

    /// <summary>Eigenvalue analysis of a drift matrix.</summary>
    public static Stability Of(Matrix<double> drift)
    {
        Complex[] eigen = [.. drift.Evd().EigenValues];
        return new Stability(eigen.Max(e => e.Real), eigen.Min(e => e.Real), eigen.Max(e => Math.Abs(e.Imaginary)));
    }
}

using MathNet.Numerics.LinearAlgebra;
using System.Numerics;
using Decohere.Numerics;

namespace Decohere.Engine;

/// <summary>
/// Stability of a stage from the eigenvalues of its drift A: the stage relaxes to a steady state when every
/// Re λ &lt; 0 (slowest decay rate −max Re λ); otherwise it amplifies at growth rate max Re λ.
/// </summary>
/// <param name="MaxRealPart">max Re λ (s⁻¹).</param>
/// <param name="MinRealPart">min Re λ (s⁻¹).</param>
/// <param name="MaxImaginaryPart">max |Im λ| (s⁻¹).</param>
/// <param name="DriftNorm">‖A‖_F (s⁻¹), the scale of the eigenvalues' rounding.</param>
public sealed record Stability(double MaxRealPart, double MinRealPart, double MaxImaginaryPart, double DriftNorm)
{
    /// <summary>True when every eigenvalue decays, by the criterion the steady-state solver applies (<see cref="Lyapunov.Decays"/>).</summary>
    public bool IsStable => Lyapunov.Decays(MaxRealPart, DriftNorm);

    /// <summary>Slowest decay rate (s⁻¹) of a stable stage.</summary>
    public double SlowestDecayRate => -MaxRealPart;

    /// <summary>Fastest decay rate (s⁻¹).</summary>
    public double FastestDecayRate => -MinRealPart;

    /// <summary>Growth rate (s⁻¹) of an unstable stage; zero or negative when stable.</summary>
    public double GrowthRate => MaxRealPart;

    /// <summary>Eigenvalue analysis of a drift matrix (the real Schur form, as in <see cref="Lyapunov.Solve"/>).</summary>
    public static Stability Of(Matrix<double> drift) => Of(LyapunovOperator.Of(drift));

    /// <summary>The stability of an analysed drift.</summary>
    public static Stability Of(LyapunovOperator drift)
    {
        double min = double.PositiveInfinity, imaginary = 0;
        foreach (Complex e in drift.Eigenvalues)
        {
            min = Math.Min(min, e.Real);
            imaginary = Math.Max(imaginary, Math.Abs(e.Imaginary));
        }
        return new Stability(drift.MaxRealPart, min, imaginary, drift.DriftNorm);
    }
}

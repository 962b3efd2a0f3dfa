namespace Decohere.Numerics;

/// <summary>
/// Thrown when a steady state is requested for a drift matrix A with an eigenvalue of non-negative
/// real part: the covariance then grows without bound and A V + V Aᵀ + D = 0 has no physical solution.
/// </summary>
public sealed class UnstableDynamicsException : Exception
{
    /// <param name="growthRate">max Re λ(A) in s⁻¹ (≥ about zero).</param>
    /// <param name="message">Human-readable explanation.</param>
    public UnstableDynamicsException(double growthRate, string message)
        : base(message)
    {
        GrowthRate = growthRate;
    }

    /// <summary>Largest real part of the eigenvalues of A, s⁻¹ (amplitudes grow like e^{GrowthRate·t}).</summary>
    public double GrowthRate { get; }
}

using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;

namespace Decohere.Model;

/// <summary>
/// The linear dynamics of the quadrature vector R = (x₁, p₁, …, xₙ, pₙ):
/// dμ/dt = A μ and dV/dt = A V + V Aᵀ + D. Rates in s⁻¹.
/// </summary>
/// <param name="Drift">A, 2n × 2n.</param>
/// <param name="Diffusion">D, 2n × 2n, symmetric positive semi-definite.</param>
/// <param name="ModeNames">The modes in state-vector order.</param>
public sealed record LinearModel(Matrix<double> Drift, Matrix<double> Diffusion, ImmutableArray<string> ModeNames)
{
    /// <summary>Dimension of the state vector, 2n.</summary>
    public int Dimension => Drift.RowCount;

    /// <summary>Position of a mode in the state vector (its x is at 2·index), or −1.</summary>
    public int IndexOf(string mode) => ModeNames.IndexOf(mode);
}

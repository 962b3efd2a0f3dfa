using System.Collections.Immutable;
using System.Numerics;
using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Scenarios;

/// <summary>One collective mode of a cavity network: H_eff ψ = (ν − iΓ/2) ψ, in Hz.</summary>
/// <param name="FrequencyHz">ν, offset from the bare cavity frequency.</param>
/// <param name="LinewidthHz">Γ, the mode's energy decay rate / 2π.</param>
/// <param name="Amplitudes">ψ normalised to Σ|ψ_j|² = 1 (real when the network is Hermitian up to a uniform linewidth).</param>
public sealed record CollectiveMode(double FrequencyHz, double LinewidthHz, ImmutableArray<Complex> Amplitudes)
{
    /// <summary>|ψ_j|², the mode's weight on site j (sums to 1).</summary>
    public double Weight(int site) => Amplitudes[site].Magnitude * Amplitudes[site].Magnitude;
}

/// <summary>
/// Collective modes of a cavity network from the eigenvalue problem of H_eff = H − iK/2. With equal linewidths H_eff and
/// H share their eigenvectors, so the symmetric eigensolver gives an orthonormal basis even inside degenerate levels
/// (honeycomb flakes have many); otherwise the general complex eigensolver gives the right eigenvectors.
/// </summary>
public static class LatticeModes
{
    /// <summary>The collective modes, in order of increasing frequency (ties by linewidth).</summary>
    public static ImmutableArray<CollectiveMode> Solve(double[,] hermitian, double[] linewidthsHz)
    {
        int n = linewidthsHz.Length;
        if (n == 0) return [];
        var modes = new List<CollectiveMode>(n);
        double first = linewidthsHz[0];
        if (linewidthsHz.All(w => w == first))
        {
            var evd = Matrix<double>.Build.DenseOfArray(hermitian).Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric);
            for (int k = 0; k < n; k++)
            {
                var v = evd.EigenVectors.Column(k);
                modes.Add(new CollectiveMode(evd.EigenValues[k].Real, first, [.. Canonical(v.Select(x => (Complex)x).ToArray())]));
            }
        }
        else
        {
            var h = Matrix<Complex>.Build.Dense(n, n, (i, j) => new Complex(hermitian[i, j], i == j ? -linewidthsHz[i] / 2 : 0));
            var evd = h.Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Asymmetric);
            for (int k = 0; k < n; k++)
            {
                var v = evd.EigenVectors.Column(k).ToArray();
                double norm = Math.Sqrt(v.Sum(x => x.Magnitude * x.Magnitude));
                var lambda = evd.EigenValues[k];
                modes.Add(new CollectiveMode(lambda.Real, -2 * lambda.Imaginary, [.. Canonical(v.Select(x => x / norm).ToArray())]));
            }
        }
        return [.. modes.OrderBy(m => m.FrequencyHz).ThenBy(m => m.LinewidthHz)];
    }

    /// <summary>The modes of a lattice scenario.</summary>
    public static ImmutableArray<CollectiveMode> Solve(Scenario scenario, Lattice lattice)
    {
        var (h, widths) = lattice.Hamiltonian(scenario);
        return Solve(h, widths);
    }

    // An eigenvector's global phase is arbitrary: fix it so the largest component is real and positive, which makes
    // tables and plots reproducible between runs and platforms.
    private static Complex[] Canonical(Complex[] v)
    {
        int big = 0;
        for (int j = 1; j < v.Length; j++) if (v[j].Magnitude > v[big].Magnitude + 1e-12) big = j;
        var phase = v[big] / v[big].Magnitude;
        return v.Select(x => x / phase).ToArray();
    }
}

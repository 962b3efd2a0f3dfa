using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using System.Numerics;

namespace Decohere.Model;

/// <summary>
/// A quadratic Hamiltonian H = ½ Rᵀ𝐇R and linear jump operators L_k = c_kᵀR, mapped to the drift and
/// diffusion of the Gaussian moments: A = Ω(𝐇 + Im C), D = Ω (Re C) Ωᵀ, C = Σ_k c_k* c_kᵀ
/// (A. Serafini, Quantum Continuous Variables, CRC Press 2017, ch. 5). Every model goes through this one map,
/// so a new coupling is one Hamiltonian or jump term.
/// </summary>
public sealed class QuadraticSystem
{
    private readonly Matrix<double> _hamiltonian;
    private readonly Matrix<Complex> _jumpSum;
    private readonly ImmutableArray<string> _modes;

    /// <summary>An empty system over the given modes (state-vector order).</summary>
    public QuadraticSystem(IEnumerable<string> modes)
    {
        _modes = [.. modes];
        int n = 2 * _modes.Length;
        _hamiltonian = Matrix<double>.Build.Dense(n, n);
        _jumpSum = Matrix<Complex>.Build.Dense(n, n);
    }

    private QuadraticSystem(QuadraticSystem other)
    {
        _modes = other._modes;
        _hamiltonian = other._hamiltonian.Clone();
        _jumpSum = other._jumpSum.Clone();
    }

    /// <summary>An independent copy, to change a few terms of without building the rest again.</summary>
    public QuadraticSystem Copy() => new(this);

    /// <summary>Number of modes.</summary>
    public int ModeCount => _modes.Length;

    /// <summary>Rotating-frame detuning δ a†a → 𝐇 block δ·I (δ in s⁻¹).</summary>
    public QuadraticSystem AddDetuning(int mode, double delta)
    {
        _hamiltonian[2 * mode, 2 * mode] += delta;
        _hamiltonian[2 * mode + 1, 2 * mode + 1] += delta;
        return this;
    }

    /// <summary>Beam splitter G(a†b + a b†) = G(x_a x_b + p_a p_b).</summary>
    public QuadraticSystem AddBeamSplitter(int a, int b, double g) => AddBilinear(a, b, g, g);

    /// <summary>Two-mode squeezing G(a†b† + a b) = G(x_a x_b − p_a p_b).</summary>
    public QuadraticSystem AddTwoModeSqueezing(int a, int b, double g) => AddBilinear(a, b, g, -g);

    private QuadraticSystem AddBilinear(int a, int b, double xx, double pp)
    {
        _hamiltonian[2 * a, 2 * b] += xx;
        _hamiltonian[2 * b, 2 * a] += xx;
        _hamiltonian[2 * a + 1, 2 * b + 1] += pp;
        _hamiltonian[2 * b + 1, 2 * a + 1] += pp;
        return this;
    }

    /// <summary>
    /// A jump operator L = Σ_j (α_j a_j + β_j a_j†), given per mode as (mode, α, β).
    /// With a = (x + i p)/√2 its coefficient vector is c = ((α+β)/√2, i(α−β)/√2) per mode.
    /// </summary>
    public QuadraticSystem AddJump(params (int Mode, Complex Alpha, Complex Beta)[] terms)
    {
        int n = 2 * _modes.Length;
        var c = new Complex[n];
        foreach (var (mode, alpha, beta) in terms)
        {
            c[2 * mode] += (alpha + beta) / Math.Sqrt(2);
            c[2 * mode + 1] += Complex.ImaginaryOne * (alpha - beta) / Math.Sqrt(2);
        }
        for (int k = 0; k < n; k++)
        {
            if (c[k] == Complex.Zero) continue;
            var ck = Complex.Conjugate(c[k]);
            for (int l = 0; l < n; l++) _jumpSum[k, l] += ck * c[l];
        }
        return this;
    }

    /// <summary>
    /// Energy damping at rate γ into a bath of occupancy n: L₁ = √(γ(n+1)) a, L₂ = √(γn) a†. Their sum c₁*c₁ᵀ + c₂*c₂ᵀ
    /// over the mode's (x, p) is γ(n + ½) I + i(γ/2)[[0, 1], [−1, 0]], added in that closed form so that the drift's
    /// −γ/2 does not pick up rounding from the occupancy.
    /// </summary>
    public QuadraticSystem AddDamping(int mode, double rate, double occupancy)
    {
        if (rate == 0) return this;
        int x = 2 * mode, p = x + 1;
        double diagonal = rate * (occupancy + 0.5), half = 0.5 * rate;
        _jumpSum[x, x] += diagonal;
        _jumpSum[p, p] += diagonal;
        _jumpSum[x, p] += new Complex(0, half);
        _jumpSum[p, x] += new Complex(0, -half);
        return this;
    }

    /// <summary>
    /// Sets the 𝐇 entries that couple modes a ≠ b to zero, so that the pair's bilinear terms can be added again with new rates.
    /// </summary>
    internal void ClearPair(int a, int b)
    {
        _hamiltonian[2 * a, 2 * b] = _hamiltonian[2 * b, 2 * a] = 0;
        _hamiltonian[2 * a + 1, 2 * b + 1] = _hamiltonian[2 * b + 1, 2 * a + 1] = 0;
    }

    /// <summary>
    /// Replaces a mode's damping, for a system in which that mode's damping is its only jump (a full model): its rows of C
    /// start again from zero and the same two jumps are added, so the entries are those a new build gives, bit for bit.
    /// </summary>
    internal void RedoDamping(int mode, double rate, double occupancy)
    {
        int n = 2 * _modes.Length;
        for (int l = 0; l < n; l++) _jumpSum[2 * mode, l] = _jumpSum[2 * mode + 1, l] = Complex.Zero;
        AddDamping(mode, rate, occupancy);
    }

    /// <summary>The drift A and diffusion D of this system.</summary>
    public LinearModel ToLinearModel()
    {
        // Ω is block diagonal with [[0, 1], [−1, 0]]: Ω M swaps each mode's two rows and negates the second, M Ωᵀ does
        // the same to the columns, so both products are permutations with signs (+ 0.0 keeps −0 out of the output).
        int n = 2 * _modes.Length;
        double[] h = _hamiltonian.AsColumnMajorArray() ?? _hamiltonian.ToColumnMajorArray();
        Complex[] c = _jumpSum.AsColumnMajorArray() ?? _jumpSum.ToColumnMajorArray();
        double[] drift = new double[n * n], diffusion = new double[n * n];
        for (int j = 0; j < n; j++)
        {
            int sj = j ^ 1;
            double signJ = (j & 1) == 0 ? 1 : -1;
            for (int i = 0; i < n; i++)
            {
                int si = i ^ 1;
                double signI = (i & 1) == 0 ? 1 : -1;
                drift[i + j * n] = signI * (h[si + j * n] + c[si + j * n].Imaginary) + 0.0;
                diffusion[i + j * n] = signI * signJ * c[si + sj * n].Real + 0.0;
            }
        }
        for (int j = 0; j < n; j++)
            for (int i = j + 1; i < n; i++)
                diffusion[i + j * n] = diffusion[j + i * n] = (diffusion[i + j * n] + diffusion[j + i * n]) * 0.5;
        return new LinearModel(Matrix<double>.Build.Dense(n, n, drift), Matrix<double>.Build.Dense(n, n, diffusion), _modes);
    }

    /// <summary>Ω = ⊕_j [[0, 1], [−1, 0]], so that [R_k, R_l] = iΩ_kl.</summary>
    public static Matrix<double> Symplectic(int modes)
    {
        var omega = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        for (int j = 0; j < modes; j++)
        {
            omega[2 * j, 2 * j + 1] = 1;
            omega[2 * j + 1, 2 * j] = -1;
        }
        return omega;
    }
}

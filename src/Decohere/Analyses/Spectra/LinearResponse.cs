using MathNet.Numerics.LinearAlgebra;
using System.Numerics;
using Decohere.Model;

namespace Decohere.Analyses.Spectra;

/// <summary>
/// Stationary noise spectra of a stable linear system dR/dt = A R + ξ, ⟨ξ(t)ξ(s)ᵀ⟩ = D δ(t − s), by linear response.
/// With S(ω) = ∫ dt e^{iωt} ⟨R(t) R(0)ᵀ⟩ and, by the quantum regression theorem, ⟨R(t)R(0)ᵀ⟩ = e^{At}(V + iΩ/2) for t ≥ 0:
/// the symmetrised spectrum is S̄(ω) = (iω + A)⁻¹ D (−iω + Aᵀ)⁻¹ (from A V + V Aᵀ + D = 0) and the ordered one adds
/// −(i/2)[(iω + A)⁻¹Ω + Ω(−iω + Aᵀ)⁻¹], so that ∫ S̄ dω/2π = V (A. A. Clerk et al., Rev. Mod. Phys. 82, 1155 (2010),
/// sec. II and app. D; C. W. Gardiner and P. Zoller, Quantum Noise, Springer 2004, ch. 5).
/// </summary>
public sealed class LinearResponse
{
    private readonly Matrix<Complex> _drift;
    private readonly Matrix<Complex> _diffusion;
    private readonly Matrix<Complex> _omega;
    private readonly Matrix<Complex> _identity;

    /// <summary>A response for the drift and diffusion of a stable model.</summary>
    public LinearResponse(LinearModel model)
    {
        _drift = model.Drift.ToComplex();
        _diffusion = model.Diffusion.ToComplex();
        _omega = QuadraticSystem.Symplectic(model.ModeNames.Length).ToComplex();
        _identity = Matrix<Complex>.Build.DenseIdentity(model.Dimension);
    }

    /// <summary>
    /// The spectra of the given modes (default all) at one angular frequency ω (s⁻¹): per mode j the 2×2 diagonal blocks of the
    /// susceptibility X = (iω + A)⁻¹, of S̄(ω) and of the ordered S(ω). Only the rows of X for those modes are formed (all of
    /// X by one inverse; a few by solving with the transpose), then S̄_jj = X_j: D X_j:† and the ordered block
    /// S̄_jj − (i/2)(X_jj Ω₂ + Ω₂ X_jj†) (Ω is block diagonal), so the cost is one factorisation and one product per frequency.
    /// </summary>
    public Response At(double omega, IReadOnlyList<int>? modes = null)
    {
        int n = _drift.RowCount;
        var m = _identity * new Complex(0, omega) + _drift;
        int[] js = modes is null ? [.. Enumerable.Range(0, n / 2)] : [.. modes];
        Matrix<Complex> rows;
        if (modes is null) rows = m.Inverse();
        else
        {
            var e = Matrix<Complex>.Build.Dense(n, 2 * js.Length);
            for (int k = 0; k < js.Length; k++) { e[2 * js[k], 2 * k] = 1; e[2 * js[k] + 1, 2 * k + 1] = 1; }
            rows = m.Transpose().LU().Solve(e).Transpose();
        }
        var y = rows * _diffusion;
        var omega2 = _omega.SubMatrix(0, 2, 0, 2);
        var blocks = new Block[js.Length];
        for (int k = 0; k < js.Length; k++)
        {
            var x = rows.SubMatrix(2 * k, 2, 2 * js[k], 2);
            var symmetric = y.SubMatrix(2 * k, 2, 0, n) * rows.SubMatrix(2 * k, 2, 0, n).ConjugateTranspose();
            var ordered = symmetric - (x * omega2 + omega2 * x.ConjugateTranspose()) * new Complex(0, 0.5);
            blocks[k] = new Block(x, symmetric, ordered);
        }
        return new Response(js, blocks);
    }

    /// <summary>The 2×2 blocks of one mode at one frequency.</summary>
    /// <param name="Susceptibility">X_jj of X(ω) = (iω + A)⁻¹ (the Fourier amplitude of R is −X ξ).</param>
    /// <param name="Symmetrised">S̄_jj(ω), Hermitian; its diagonal is real and even in ω.</param>
    /// <param name="Ordered">S_jj(ω) = ∫ e^{iωt}⟨R(t)R(0)ᵀ⟩ dt, the unsymmetrised spectrum.</param>
    public sealed record Block(Matrix<Complex> Susceptibility, Matrix<Complex> Symmetrised, Matrix<Complex> Ordered);

    /// <summary>The blocks of the modes asked for, at one frequency.</summary>
    public sealed record Response(int[] Modes, Block[] Blocks)
    {
        /// <summary>The blocks of mode j (one of <see cref="Modes"/>).</summary>
        public Block Of(int j) => Blocks[Array.IndexOf(Modes, j)];
    }

    /// <summary>
    /// ∫ e^{iωτ}⟨a(τ) a†(0)⟩ dτ of a mode from its ordered block at +ω: absorption, integrating to n + 1 over dω/2π.
    /// With a = uᵀR, u = (1, i)/√2, it is uᵀ S(ω) ū.
    /// </summary>
    public static double Antinormal(Matrix<Complex> orderedAtOmega) =>
        0.5 * (orderedAtOmega[0, 0] + orderedAtOmega[1, 1] - Complex.ImaginaryOne * orderedAtOmega[0, 1] + Complex.ImaginaryOne * orderedAtOmega[1, 0]).Real;

    /// <summary>
    /// ∫ e^{iωτ}⟨a†(0) a(τ)⟩ dτ of a mode (emission seen at the mode's frequency + ω, integrating to n) from the ordered
    /// block at −ω: ūᵀ S(−ω) u.
    /// </summary>
    public static double Normal(Matrix<Complex> orderedAtMinusOmega) =>
        0.5 * (orderedAtMinusOmega[0, 0] + orderedAtMinusOmega[1, 1] + Complex.ImaginaryOne * orderedAtMinusOmega[0, 1] - Complex.ImaginaryOne * orderedAtMinusOmega[1, 0]).Real;

    /// <summary>
    /// Symmetrised spectrum (2×2) of the field leaving a cavity mode through its port, then through a transmission η:
    /// a_out = a_in − √κ a (C. W. Gardiner and M. J. Collett, Phys. Rev. A 31, 3761 (1985)), the port's input carrying the
    /// cavity's bath n_c. With the whole diffusion of the cavity block from the port, D = D_rest + κ(n_c + ½)E_c, so
    /// S̄_out = (n_c + ½) M M† + κ S̄_cc − κ²(n_c + ½) X_cc X_cc†, M = I + κ X_cc; then η S̄_out + (1 − η)/2 (vacuum enters the
    /// lost part). An output field's commutator is a δ function, so its ordered spectrum is S̄_out + iΩ/2.
    /// </summary>
    public static Matrix<Complex> Output(Block cavity, double kappa, double bathOccupancy, double efficiency)
    {
        var xcc = cavity.Susceptibility;
        var scc = cavity.Symmetrised;
        var identity = Matrix<Complex>.Build.DenseIdentity(2);
        var m = identity + xcc * kappa;
        double h = bathOccupancy + 0.5;
        var output = m * m.ConjugateTranspose() * h + scc * kappa - xcc * xcc.ConjugateTranspose() * (kappa * kappa * h);
        output = (output + output.ConjugateTranspose()) * 0.5;
        return output * efficiency + identity * (0.5 * (1 - efficiency));
    }

    /// <summary>The ordered (2×2) spectrum of a field of symmetrised spectrum <paramref name="symmetrised"/>: S̄ + iΩ/2.</summary>
    public static Matrix<Complex> OrderedField(Matrix<Complex> symmetrised)
    {
        var result = symmetrised.Clone();
        result[0, 1] += new Complex(0, 0.5);
        result[1, 0] -= new Complex(0, 0.5);
        return result;
    }
}

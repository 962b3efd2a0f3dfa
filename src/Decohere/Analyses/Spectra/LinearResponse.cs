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

    /// <summary>The spectra at one angular frequency ω (s⁻¹): the susceptibility X = (iω + A)⁻¹, S̄(ω) and the ordered S(ω).</summary>
    public Response At(double omega)
    {
        var x = (_identity * new Complex(0, omega) + _drift).Inverse();
        var xh = x.ConjugateTranspose();
        var symmetric = x * _diffusion * xh;
        var ordered = symmetric - (x * _omega + _omega * xh) * new Complex(0, 0.5);
        return new Response(x, symmetric, ordered);
    }

    /// <summary>The response at one frequency.</summary>
    /// <param name="Susceptibility">X(ω) = (iω + A)⁻¹ (the Fourier amplitude of R is −X ξ).</param>
    /// <param name="Symmetrised">S̄(ω), Hermitian; its diagonal is real and even in ω.</param>
    /// <param name="Ordered">S(ω) = ∫ e^{iωt}⟨R(t)R(0)ᵀ⟩ dt, the unsymmetrised spectrum.</param>
    public sealed record Response(Matrix<Complex> Susceptibility, Matrix<Complex> Symmetrised, Matrix<Complex> Ordered);

    /// <summary>
    /// ∫ e^{iωτ}⟨a(τ) a†(0)⟩ dτ of mode j from the ordered spectrum at +ω: absorption, integrating to n + 1 over dω/2π.
    /// With a = uᵀR, u = (1, i)/√2, it is uᵀ S(ω) ū.
    /// </summary>
    public static double Antinormal(Matrix<Complex> orderedAtOmega, int j) =>
        0.5 * (orderedAtOmega[2 * j, 2 * j] + orderedAtOmega[2 * j + 1, 2 * j + 1]
               - Complex.ImaginaryOne * orderedAtOmega[2 * j, 2 * j + 1] + Complex.ImaginaryOne * orderedAtOmega[2 * j + 1, 2 * j]).Real;

    /// <summary>
    /// ∫ e^{iωτ}⟨a†(0) a(τ)⟩ dτ of mode j (emission seen at the mode's frequency + ω, integrating to n) from the ordered
    /// spectrum at −ω: ūᵀ S(−ω) u.
    /// </summary>
    public static double Normal(Matrix<Complex> orderedAtMinusOmega, int j) =>
        0.5 * (orderedAtMinusOmega[2 * j, 2 * j] + orderedAtMinusOmega[2 * j + 1, 2 * j + 1]
               + Complex.ImaginaryOne * orderedAtMinusOmega[2 * j, 2 * j + 1] - Complex.ImaginaryOne * orderedAtMinusOmega[2 * j + 1, 2 * j]).Real;

    /// <summary>
    /// Symmetrised spectrum (2×2) of the field leaving cavity mode j through its port, then through a transmission η:
    /// a_out = a_in − √κ a (C. W. Gardiner and M. J. Collett, Phys. Rev. A 31, 3761 (1985)), the port's input carrying the
    /// cavity's bath n_c. With the whole diffusion of the cavity block from the port, D = D_rest + κ(n_c + ½)E_c, so
    /// S̄_out = (n_c + ½) M M† + κ S̄_cc − κ²(n_c + ½) X_cc X_cc†, M = I + κ X_cc; then η S̄_out + (1 − η)/2 (vacuum enters the
    /// lost part). An output field's commutator is a δ function, so its ordered spectrum is S̄_out + iΩ/2.
    /// </summary>
    public static Matrix<Complex> Output(Response r, int j, double kappa, double bathOccupancy, double efficiency)
    {
        var xcc = r.Susceptibility.SubMatrix(2 * j, 2, 2 * j, 2);
        var scc = r.Symmetrised.SubMatrix(2 * j, 2, 2 * j, 2);
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

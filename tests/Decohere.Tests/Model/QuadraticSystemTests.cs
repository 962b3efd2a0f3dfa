using MathNet.Numerics.LinearAlgebra;
using System.Numerics;
using Decohere.Model;
using Decohere.Numerics;

namespace Decohere.Tests.Model;

public class QuadraticSystemTests
{
    [Fact]
    public void DampedModeWorkedByHand()
    {
        // L₁ = √(γ(n+1)) a, L₂ = √(γn) a† give A = −(γ/2)I and D = γ(n + ½)I (worked by hand from A = Ω(𝐇 + Im C),
        // D = Ω Re C Ωᵀ; A. Serafini, Quantum Continuous Variables, CRC Press 2017).
        double gamma = 3.7, n = 2.5;
        var model = new QuadraticSystem(["m"]).AddDamping(0, gamma, n).ToLinearModel();
        var expectedA = Matrix<double>.Build.DenseIdentity(2) * (-gamma / 2);
        var expectedD = Matrix<double>.Build.DenseIdentity(2) * (gamma * (n + 0.5));
        Assert.True((model.Drift - expectedA).FrobeniusNorm() < 1e-14);
        Assert.True((model.Diffusion - expectedD).FrobeniusNorm() < 1e-14);
    }

    [Fact]
    public void DampingIsItsTwoJumpsAndItsDriftIgnoresTheOccupancy()
    {
        // The closed form of AddDamping against the two jumps L₁ = √(γ(n+1)) a, L₂ = √(γn) a† through the general map;
        // the drift −(γ/2)I holds exactly for every n, so models that differ only in bath temperature share their drift.
        double gamma = 3.7;
        foreach (double n in new[] { 0.0, 1e-9, 0.37, 2.5, 1234.5 })
        {
            var closed = new QuadraticSystem(["m"]).AddDamping(0, gamma, n).ToLinearModel();
            var jumps = new QuadraticSystem(["m"]).AddJump((0, Math.Sqrt(gamma * (n + 1)), Complex.Zero))
                .AddJump((0, Complex.Zero, Math.Sqrt(gamma * n))).ToLinearModel();
            Assert.True((closed.Drift - jumps.Drift).FrobeniusNorm() < 1e-14 * gamma * (n + 1));   // the jumps round at γ(n + 1)
            Assert.True((closed.Diffusion - jumps.Diffusion).FrobeniusNorm() < 1e-14 * gamma * (n + 1));
            Assert.Equal(new[] { -gamma / 2, 0, 0, -gamma / 2 }, closed.Drift.ToColumnMajorArray());
        }
    }

    [Fact]
    public void DetuningRotatesThePhasePlane()
    {
        // H = δ a†a: Heisenberg dx/dt = δp, dp/dt = −δx (common practice).
        var model = new QuadraticSystem(["m"]).AddDetuning(0, 2.0).ToLinearModel();
        Assert.Equal(2.0, model.Drift[0, 1]);
        Assert.Equal(-2.0, model.Drift[1, 0]);
        Assert.Equal(0.0, model.Drift[0, 0]);
    }

    public static TheoryData<string> TwoModeCouplings => new() { "beam-splitter", "two-mode-squeezing" };

    [Theory]
    [MemberData(nameof(TwoModeCouplings))]
    public void TwoModeCouplingMatchesFockSpaceMasterEquation(string kind)
    {
        // Independent method: the Lindblad equation in a truncated Fock basis (8 levels per mode), RK4-integrated.
        double g = 0.3, gammaA = 1.0, gammaB = 0.8, nA = 0.1, nB = 0.05, detuning = 0.2, t = 1.5;
        var fock = new FockSpaceMasterEquation(modes: 2, cutoff: 8);
        var a = fock.A(0); var b = fock.A(1);
        var coupling = kind == "beam-splitter"
            ? fock.Ad(0) * b + a * fock.Ad(1)
            : fock.Ad(0) * fock.Ad(1) + a * b;
        fock.Hamiltonian = coupling * g + fock.Ad(0) * a * detuning;
        fock.AddDamping(0, gammaA, nA);
        fock.AddDamping(1, gammaB, nB);
        var reference = fock.Covariance(fock.Evolve(fock.Vacuum(), t, 300));

        var system = new QuadraticSystem(["a", "b"]).AddDamping(0, gammaA, nA).AddDamping(1, gammaB, nB).AddDetuning(0, detuning);
        if (kind == "beam-splitter") system.AddBeamSplitter(0, 1, g); else system.AddTwoModeSqueezing(0, 1, g);
        var model = system.ToLinearModel();
        var step = VanLoan.Discretize(model.Drift, model.Diffusion, t);
        var v = step.Phi * (Matrix<double>.Build.DenseIdentity(4) * 0.5) * step.Phi.Transpose() + step.Q;

        // Truncation at 8 levels with occupancies below 0.2 and RK4 at h = 0.005 leave errors below 1e-5.
        for (int k = 0; k < 4; k++)
            for (int l = 0; l < 4; l++)
                Assert.True(Math.Abs(v[k, l] - reference[k, l]) < 2e-5, $"{kind} V[{k},{l}]: {v[k, l]} vs Fock {reference[k, l]}");
        double correlation = Math.Max(Math.Max(Math.Abs(v[0, 2]), Math.Abs(v[0, 3])), Math.Max(Math.Abs(v[1, 2]), Math.Abs(v[1, 3])));
        Assert.True(correlation > 1e-3, "the coupling must correlate the modes, or the test proves nothing");
    }

    [Fact]
    public void GeneralJumpOperatorMatchesFockSpace()
    {
        // A collective jump L = α a + β b† (as the eliminated cavity of the effective model produces).
        double alpha = 0.9, beta = 0.4, t = 1.0;
        var fock = new FockSpaceMasterEquation(modes: 2, cutoff: 8);
        fock.Jumps.Add(fock.A(0) * alpha + fock.Ad(1) * beta);
        fock.AddDamping(0, 0.5, 0.0);
        fock.AddDamping(1, 0.5, 0.0);
        var reference = fock.Covariance(fock.Evolve(fock.Vacuum(), t, 200));

        var model = new QuadraticSystem(["a", "b"]).AddJump((0, alpha, Complex.Zero), (1, Complex.Zero, beta))
            .AddDamping(0, 0.5, 0).AddDamping(1, 0.5, 0).ToLinearModel();
        var step = VanLoan.Discretize(model.Drift, model.Diffusion, t);
        var v = step.Phi * (Matrix<double>.Build.DenseIdentity(4) * 0.5) * step.Phi.Transpose() + step.Q;
        for (int k = 0; k < 4; k++)
            for (int l = 0; l < 4; l++)
                Assert.True(Math.Abs(v[k, l] - reference[k, l]) < 2e-5, $"V[{k},{l}]: {v[k, l]} vs Fock {reference[k, l]}");
    }
}

using Decohere.Engine;
using Decohere.Numerics;

using static Decohere.Tests.Engine.TestScenarios;

namespace Decohere.Tests.Engine;

/// <summary>The engine against closed-form laws of open Gaussian dynamics.</summary>
public class PhysicsLawTests
{
    private static void Close(double expected, double actual, double relative, string what) =>
        Assert.True(Math.Abs(expected - actual) <= relative * Math.Abs(expected), $"{what}: expected {expected:R}, got {actual:R}");

    [Fact]
    public void ThermalDecoherenceLaw()
    {
        // V(t) = e^{−γt} V(0) + (1 − e^{−γt})(n_th + ½) I for a damped mode (common practice; quantum Langevin equations,
        // C. W. Gardiner and P. Zoller, Quantum Noise, Springer 2004).
        double linewidth = 0.5, n = 20, t = 0.3, gamma = 2 * Math.PI * linewidth;
        var dynamics = Dynamics.Solve(FreeMode(linewidth, n, "{ state: squeezed, squeezing_db: 6, angle: 30 deg }"));
        var v0 = dynamics.Boundaries[0].Covariance;
        var vt = dynamics.StateAt(t).Covariance;
        double e = Math.Exp(-gamma * t);
        for (int k = 0; k < 2; k++)
            for (int l = 0; l < 2; l++)
                Close(e * v0[k, l] + (k == l ? (1 - e) * (n + 0.5) : 0), vt[k, l], 1e-12, $"V[{k},{l}]");
        // The initial squeezed state itself: var_min = ½·10^(−6/10) along 30° (PHYSICS.md conventions).
        var m0 = dynamics.Boundaries[0].Moments(0);
        Close(0.5 * Math.Pow(10, -0.6), m0.VarMin, 1e-12, "initial var_min");
        Close(Math.PI / 6, m0.AngleRad, 1e-12, "initial angle");
        Close(6, m0.SqueezingDb, 1e-12, "initial squeezing");
    }

    [Fact]
    public void SqueezingLifetimeLaw()
    {
        // t* = (1/γ) ln[(n_th + ½ − V_min(0)) / n_th] follows from the thermal decoherence law at V_min(t*) = ½.
        double linewidth = 0.15, n = 76, gamma = 2 * Math.PI * linewidth;
        var dynamics = Dynamics.Solve(FreeMode(linewidth, n, "{ state: squeezed, squeezing_db: 7.5 }"));
        double v0 = dynamics.Boundaries[0].Moments(0).VarMin;
        double tStar = Math.Log((n + 0.5 - v0) / n) / gamma;
        Close(0.5, dynamics.StateAt(tStar).Moments(0).VarMin, 1e-12, "var_min(t*)");
        // The approximation (½ − V_min(0))/Γ_th holds to about (½ − V_min(0))/(2 n_th) relative (PHYSICS.md).
        double approximation = (0.5 - v0) / (gamma * n);
        Assert.True(Math.Abs(approximation / tStar - 1) < (0.5 - v0) / n, "rule-of-thumb lifetime");
    }

    [Fact]
    public void RedToneSteadyOccupancyWithCavityKept()
    {
        // n = [γ n_th (4G² + κ(κ + γ)) + 4G²κ n_c] / [(γ + κ)(4G² + κγ)] for one resonant red tone in the rotating-wave model
        // (PHYSICS.md check value, derived from the Langevin equations).
        double kappaHz = 210e3, gammaHz = 30, nth = 76, nc = 0.04, gHz = 25e3;
        var dynamics = Dynamics.Solve(Optomechanical("full", kappaHz, gammaHz, nth, nc, gHz, 0));
        double k = 2 * Math.PI * kappaHz, g = 2 * Math.PI * gammaHz, G = 2 * Math.PI * gHz;
        double expected = (g * nth * (4 * G * G + k * (k + g)) + 4 * G * G * k * nc) / ((g + k) * (4 * G * G + k * g));
        Close(expected, dynamics.SteadyState(0).Moments("m").Occupancy, 1e-9, "steady occupancy");
        Assert.True(dynamics.SteadyState(0).UncertaintyMargin() > -1e-12);
    }

    [Fact]
    public void TwoToneSqueezingWithCavityKeptIsExact()
    {
        // V_min = [Γe^{−2r}(n_c+½) + γ(n_th+½)c]/(Γ + γc), c = 1 + (Γ+γ)/κ (PHYSICS.md check value for the full rotating-wave model).
        double kappaHz = 210e3, gammaHz = 5, nth = 76, nc = 0.04, gm = 25e3, gp = 18e3;
        var dynamics = Dynamics.Solve(Optomechanical("full", kappaHz, gammaHz, nth, nc, gm, gp));
        var (expected, _) = TwoTone(kappaHz, gammaHz, nth, nc, gm, gp);
        var moments = dynamics.SteadyState(0).Moments("m");
        Close(expected, moments.VarMin, 1e-9, "steady var_min");
        Assert.Equal(0, moments.AngleRad, 12);   // red + blue with real couplings squeeze x (PHYSICS.md)
    }

    private static (double CavityKept, double BadCavity) TwoTone(double kappaHz, double gammaHz, double nth, double nc, double gmHz, double gpHz)
    {
        double k = 2 * Math.PI * kappaHz, g = 2 * Math.PI * gammaHz, gm = 2 * Math.PI * gmHz, gp = 2 * Math.PI * gpHz;
        double rate = 4 * (gm * gm - gp * gp) / k, squeeze = (gm - gp) / (gm + gp), c = 1 + (rate + g) / k;
        double kept = (rate * squeeze * (nc + 0.5) + g * (nth + 0.5) * c) / (rate + g * c);
        // Bad-cavity limit: A. Kronwald, F. Marquardt, A. A. Clerk, Phys. Rev. A 88, 063833 (2013).
        double bad = (g * (nth + 0.5) + rate * squeeze * (nc + 0.5)) / (g + rate);
        return (kept, bad);
    }

    [Fact]
    public void TwoToneFullModelApproachesTheBadCavityFormula()
    {
        // Keep Γ = 4(G₋² − G₊²)/κ and the ratio G₊/G₋ fixed while κ grows: the full model must converge to
        // the bad-cavity formula of Kronwald, Marquardt and Clerk (2013), with an error shrinking like 1/κ.
        double gammaHz = 5, nth = 76, nc = 0.04, ratio = 0.72, rateHz = 6e3;
        double previous = double.PositiveInfinity;
        foreach (double kappaHz in new[] { 0.2e6, 2e6, 20e6 })
        {
            double gm = Math.Sqrt(rateHz * kappaHz / (4 * (1 - ratio * ratio)));
            var dynamics = Dynamics.Solve(Optomechanical("full", kappaHz, gammaHz, nth, nc, gm, ratio * gm));
            var (_, bad) = TwoTone(kappaHz, gammaHz, nth, nc, gm, ratio * gm);
            double error = Math.Abs(dynamics.SteadyState(0).Moments("m").VarMin / bad - 1);
            Assert.True(error < previous / 5, $"κ/2π = {kappaHz}: error {error} did not shrink from {previous}");
            previous = error;
        }
        Assert.True(previous < 1e-3, $"final relative error {previous}");
    }

    [Fact]
    public void SidebandCoolingWithOffResonantRates()
    {
        // n_f = [γ n_th + A₋ n_c + A₊(n_c + 1)] / (γ + A₋ − A₊), A∓ = G²κ/((κ/2)² + (Δ ± ω_m)²) at Δ = −ω_m
        // (F. Marquardt, J. P. Chen, A. A. Clerk, S. M. Girvin, Phys. Rev. Lett. 99, 093902 (2007)).
        double kappaHz = 600e3, omegaHz = 1.5e6, gammaHz = 0.03, nth = 2.8e6 / 1.5e6 * 1e3, nc = 0.01, gHz = 40e3;
        var dynamics = Dynamics.Solve(Optomechanical("effective", kappaHz, gammaHz, nth, nc, gHz, 0, omegaHz: omegaHz, corrections: true));
        double k = 2 * Math.PI * kappaHz, w = 2 * Math.PI * omegaHz, g = 2 * Math.PI * gammaHz, G = 2 * Math.PI * gHz;
        double aMinus = G * G * k / (k * k / 4);
        double aPlus = G * G * k / (k * k / 4 + 4 * w * w);
        double expected = (g * nth + aMinus * nc + aPlus * (nc + 1)) / (g + aMinus - aPlus);
        Close(expected, dynamics.SteadyState(0).Moments("m").Occupancy, 1e-10, "n_f");
    }

    [Fact]
    public void SidebandCoolingReachesTheResolvedSidebandLimit()
    {
        // n_min = A₊/(A₋ − A₊) = (κ/4ω_m)² (Marquardt et al. 2007; I. Wilson-Rae et al., Phys. Rev. Lett. 99, 093901 (2007)).
        double kappaHz = 600e3, omegaHz = 1.5e6;
        var dynamics = Dynamics.Solve(Optomechanical("effective", kappaHz, 1e-9, 0, 0, 40e3, 0, omegaHz: omegaHz, corrections: true));
        double limit = Math.Pow(kappaHz / (4 * omegaHz), 2);
        Close(limit, dynamics.SteadyState(0).Moments("m").Occupancy, 1e-6, "quantum limit");
        // Without the corrections the rotating-wave model cools to the bath of the cavity (zero here).
        var rwa = Dynamics.Solve(Optomechanical("effective", kappaHz, 1e-9, 0, 0, 40e3, 0, omegaHz: omegaHz));
        Assert.True(rwa.SteadyState(0).Moments("m").Occupancy < 1e-9);
    }

    [Fact]
    public void EffectiveModelMatchesFullModelForAFastCavity()
    {
        // Adiabatic elimination (PHYSICS.md): for κ ≫ G the full and effective models agree to O((G/κ)²) plus O(γ/κ).
        double kappaHz = 5e6, gammaHz = 2, nth = 50, nc = 0.1, gm = 60e3, gp = 40e3;
        var full = Dynamics.Solve(Optomechanical("full", kappaHz, gammaHz, nth, nc, gm, gp)).SteadyState(0).Moments("m");
        var effective = Dynamics.Solve(Optomechanical("effective", kappaHz, gammaHz, nth, nc, gm, gp)).SteadyState(0).Moments("m");
        Close(full.VarMin, effective.VarMin, 2e-3, "var_min");
        Close(full.VarMax, effective.VarMax, 2e-3, "var_max");
    }

    [Fact]
    public void StiffStageStaysFiniteAndExact()
    {
        // κτ ≈ 2000 (PHYSICS.md "Stiffness"): after many relaxation times the end state equals the steady state, computed
        // independently by the Lyapunov solver; composing 1000 sub-steps gives the same state.
        double kappaHz = 210e3, tau = 2000 / (2 * Math.PI * kappaHz);
        var dynamics = Dynamics.Solve(Optomechanical("full", kappaHz, 0.15, 76, 0.04, 25e3, 0, durationS: tau));
        var end = dynamics.Boundaries[1];
        var steady = dynamics.SteadyState(0);
        Assert.All(end.Covariance.Enumerate(), x => Assert.True(double.IsFinite(x)));
        // The slowest rate is the cooled mechanics, Γ ≈ 4G²/κ ≈ 7.5e4 s⁻¹, so Γτ ≈ 110 relaxation times.
        double scale = steady.Covariance.FrobeniusNorm();
        Assert.True((end.Covariance - steady.Covariance).FrobeniusNorm() < 1e-9 * scale);
        var stepped = dynamics.Boundaries[0];
        for (int i = 0; i < 1000; i++) stepped = dynamics.Propagate(stepped, 0, tau / 1000);
        Assert.True((end.Covariance - stepped.Covariance).FrobeniusNorm() < 1e-9 * scale);
    }

    [Fact]
    public void ExactPropagationAgreesWithRungeKutta()
    {
        // Independent method: classical RK4 on dV/dt = AV + VAᵀ + D with a step far below 1/κ.
        var demo = Decohere.Scenarios.ScenarioLoader.Demo();
        var dynamics = Dynamics.Solve(demo);
        int squeeze = demo.StageIndex("squeeze");
        double t = 20e-6;
        var a = dynamics.Models[squeeze].Drift;
        var d = dynamics.Models[squeeze].Diffusion;
        var v = dynamics.Boundaries[squeeze].Covariance.Clone();
        int steps = 4000;
        double h = t / steps;
        MathNet.Numerics.LinearAlgebra.Matrix<double> F(MathNet.Numerics.LinearAlgebra.Matrix<double> x) => a * x + x * a.Transpose() + d;
        for (int s = 0; s < steps; s++)
        {
            var k1 = F(v); var k2 = F(v + k1 * (h / 2)); var k3 = F(v + k2 * (h / 2)); var k4 = F(v + k3 * h);
            v += (k1 + 2 * k2 + 2 * k3 + k4) * (h / 6);
        }
        var exact = dynamics.Propagate(dynamics.Boundaries[squeeze], squeeze, t).Covariance;
        Assert.True((exact - v).FrobeniusNorm() < 1e-9 * v.FrobeniusNorm(), $"difference {(exact - v).FrobeniusNorm()}");
    }

    [Fact]
    public void UnstableStageAmplifiesButHasNoSteadyState()
    {
        // Blue stronger than red: the Bogoliubov damping 4(G₋² − G₊²)/κ turns negative (PHYSICS.md), so the stage grows.
        var scenario = Optomechanical("effective", 210e3, 1, 10, 0, 10e3, 20e3, durationS: 1e-4);
        var dynamics = Dynamics.Solve(scenario);
        Assert.False(dynamics.Stabilities[0].IsStable);
        double k = 2 * Math.PI * 210e3, gm = 2 * Math.PI * 10e3, gp = 2 * Math.PI * 20e3, g = 2 * Math.PI;
        // Effective model: the mode's amplitude grows at (4(G₊² − G₋²)/κ − γ)/2 (rates of the Lindblad jumps, halved for amplitudes).
        Close((4 * (gp * gp - gm * gm) / k - g) / 2, dynamics.Stabilities[0].GrowthRate, 1e-9, "growth rate");
        var e = Assert.Throws<UnstableDynamicsException>(() => dynamics.SteadyState(0));
        Assert.Contains("grows at", e.Message);
        Assert.True(dynamics.Boundaries[1].Moments(0).Occupancy > dynamics.Boundaries[0].Moments(0).Occupancy);
    }

    [Fact]
    public void SteadyInitialStateIsStationary()
    {
        var scenario = Optomechanical("full", 210e3, 0.15, 76, 0.04, 25e3, 18e3, durationS: 1e-4,
            initial: "initial:\n  m: { state: steady }\n  c: { state: steady }");
        var dynamics = Dynamics.Solve(scenario);
        var start = dynamics.Boundaries[0].Covariance;
        Assert.True((start - dynamics.Boundaries[1].Covariance).FrobeniusNorm() < 1e-9 * start.FrobeniusNorm());
    }
}

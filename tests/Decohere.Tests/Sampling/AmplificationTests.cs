using Decohere.Model.Readouts;
using Decohere.Core;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Sampling;

public class AmplificationTests
{
    private static Scenario Amplified(string model, string mechanicalLinewidth, double cavityOccupancy, string extra = "") => ScenarioLoader.Parse($$"""
        name: test-amplifier
        model: {{model}}
        modes:
          bar: { kind: mechanical, frequency: 4 MHz, linewidth: {{mechanicalLinewidth}}, bath: { occupancy: 30 } }
          res: { kind: cavity, frequency: 6 GHz, linewidth: 200 kHz, bath: { occupancy: {{cavityOccupancy}} } }
        initial:
          bar: { state: squeezed, squeezing_db: 3, angle: 0 }
        stages:
          - name: hold
            duration: 1 ms
            tones: [{ cavity: res, mechanical: bar, sideband: red, coupling: 1 kHz }]
        readout: { mode: bar, method: amplification, coupling: 10 kHz, duration: 80 us, detector_noise: 20, shots: 20000, stage: hold, delays: [0 ms] }
        output: { step: 100 us }
        seed: 3
        {{extra}}
        """, "test-amplifier");

    [Fact]
    public void EffectiveModelFollowsTheDampedAmplifierLaw()
    {
        // PHYSICS.md "Parametric amplification" (effective model, γ > 0): g = e^{(Γ−γ)t}, Γ = 4G²/κ, added variance
        // (g − 1)[Γ(n_c + ½) + γ(n_th + ½)]/(Γ − γ); input-referred noise (added + n_det)/g (Caves 1982; Clerk et al. 2010).
        var a = (AmplificationReadout)ReadoutChains.For(Amplified("effective", "5 Hz", 0.1));
        double G = 2 * Math.PI * 10e3, kappa = 2 * Math.PI * 200e3, gamma = 2 * Math.PI * 5, t = 80e-6;
        double big = 4 * G * G / kappa;
        double g = Math.Exp((big - gamma) * t);
        double added = (g - 1) * (big * 0.6 + gamma * 30.5) / (big - gamma);
        Assert.Equal(g, a.PulseGain, 1e-7 * g);
        Assert.Equal(added, a.PulseAddedNoise, 1e-7 * added);
        Assert.Equal((added + 20) / g, a.AddedNoise, 1e-7);
        Assert.Equal("res", a.Cavity);
    }

    [Fact]
    public void FullModelAddsGMinusOneTimesTheCavityNoiseWithItsOwnGain()
    {
        // PHYSICS.md: with the mechanics undamped and the cavity starting in its bath, V_out = g·V_in + (g − 1)(n_c + ½)
        // holds exactly for the model's own gain (C. M. Caves, Phys. Rev. D 26, 1817 (1982)); and g is below e^{Γt}.
        var scenario = Amplified("full", "1 Hz", 0.3);
        scenario = scenario with { Modes = [.. scenario.Modes.Select(m => m.Kind == ModeKind.Mechanical ? m with { LinewidthHz = 0 } : m)] };
        var a = (AmplificationReadout)ReadoutChains.For(scenario);
        Assert.True(a.PulseGain > 2, $"gain {a.PulseGain}");
        Assert.Equal((a.PulseGain - 1) * 0.8, a.PulseAddedNoise, 1e-8 * a.PulseAddedNoise);
        double G = 2 * Math.PI * 10e3, kappa = 2 * Math.PI * 200e3;
        Assert.True(a.PulseGain < Math.Exp(4 * G * G / kappa * 80e-6));
    }

    [Fact]
    public async Task ShotsCarryTheDerivedAddedNoise()
    {
        // The (i − x) differences are the readout noise: variance n_add, standard error n_add·√(2/(N−1)); 5σ.
        var sampler = new ShotSampler(Amplified("effective", "5 Hz", 0.1));
        double noise = sampler.Chain.AddedNoise;
        Assert.True(noise > 0.5, "a phase-insensitive readout of both quadratures adds at least ½ (Caves 1982)");
        var d = new List<double>();
        await sampler.RunAsync((b, _) =>
        {
            for (int k = 0; k < b.Count; k++) d.Add(b.I[k] - b.X[k]);
            return ValueTask.CompletedTask;
        });
        double mean = d.Average(), variance = d.Sum(v => (v - mean) * (v - mean)) / (d.Count - 1);
        MonteCarloAssert.Within(noise, variance, noise * Math.Sqrt(2.0 / (d.Count - 1)), 5, "readout noise variance");
    }

    [Fact]
    public void AMechanicalModeWithoutACavityIsRefusedNamingTheField()
    {
        var scenario = Amplified("effective", "5 Hz", 0.1);
        scenario = scenario with { Stages = [.. scenario.Stages.Select(s => s with { Tones = [] })] };
        var e = Assert.Throws<InputException>(() => ReadoutChains.For(scenario));
        Assert.Contains("readout.method", e.Message);
    }
}

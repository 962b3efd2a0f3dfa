using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Scenarios;

namespace Decohere.Tests.Model;

/// <summary>The readout chain model: Friis cascade, the amplification pulse in front of it, and the loader's rules.</summary>
public class ReadoutChainTests
{
    // Exact SI values (CODATA 2018; exact since the 2019 SI redefinition), written out so the test does not lean on Core.Physics.
    private const double H = 6.62607015e-34, KB = 1.380649e-23;

    private static string Scenario(string readout, string model = "full", string tones = "[{ cavity: res, mechanical: bar, sideband: red, coupling: 1 kHz }]") => $$"""
        name: chain-test
        model: {{model}}
        modes:
          bar: { kind: mechanical, frequency: 4 MHz, linewidth: 5 Hz, bath: { occupancy: 30 } }
          res: { kind: cavity, frequency: 6 GHz, linewidth: 200 kHz, bath: { occupancy: 0.1 } }
        stages:
          - { name: hold, duration: 1 ms, tones: {{tones}} }
        readout: { mode: bar, shots: 1000, stage: hold, delays: [0 ms], {{readout}} }
        """;

    private const string Chain = "chain: [{ efficiency: 0.6 }, { gain: 20 dB, noise: 0.5 }, { gain: 40 dB, noise_temperature: 2 K }]";

    /// <summary>H. T. Friis, Proc. IRE 32, 419 (1944): N = N₁ + N₂/G₁ + N₃/(G₁G₂); a loss η adds (1 − η)/(2η) (C. M. Caves, Phys. Rev. D 26, 1817 (1982)).</summary>
    private static double FriisOfTheChain()
    {
        double eta = 0.6, n1 = (1 - eta) / (2 * eta);
        double n2 = 0.5, g2 = 100;                       // 20 dB
        double n3 = KB * 2 / (H * 6e9);                  // 2 K at the read cavity's 6 GHz, k_B·T/(h·f)
        return n1 + n2 / eta + n3 / (eta * g2);
    }

    [Fact]
    public void PhenomenologicalChainGivesTheFriisValue()
    {
        var chain = ReadoutChains.For(ScenarioLoader.Parse(Scenario(Chain), "chain"));
        double expected = FriisOfTheChain();
        Assert.Equal(expected, chain.AddedNoise, 1e-9 * expected);
        Assert.Equal(0.6 * 100 * 1e4, chain.Gain, 1e-9 * chain.Gain);
        Assert.Equal(["readout.chain[0].efficiency", "readout.chain[1].gain", "readout.chain[1].noise", "readout.chain[2].gain", "readout.chain[2].noise_temperature"],
            chain.Parameters.ToArray());
    }

    [Fact]
    public void AmplificationPulseDividesTheChainByItsGain()
    {
        // PHYSICS.md, damped parametric amplifier of the effective model: g = e^{(Γ−γ)t}, Γ = 4G²/κ, added variance
        // (g − 1)[Γ(n_c + ½) + γ(n_th + ½)]/(Γ − γ); everything after the pulse is divided by g.
        var chain = ReadoutChains.For(ScenarioLoader.Parse(Scenario($"method: amplification, coupling: 10 kHz, duration: 80 us, {Chain}", "effective"), "chain"));
        double G = 2 * Math.PI * 10e3, kappa = 2 * Math.PI * 200e3, gamma = 2 * Math.PI * 5, t = 80e-6, big = 4 * G * G / kappa;
        double g = Math.Exp((big - gamma) * t);
        double pulse = (g - 1) * (big * 0.6 + gamma * 30.5) / (big - gamma);
        double expected = (pulse + FriisOfTheChain()) / g;
        Assert.Equal(expected, chain.AddedNoise, 1e-7 * expected);
        Assert.Equal(expected, chain.Contributions.Sum(c => c.InputReferred), 1e-12 * expected);
        Assert.Equal("amplification", chain.Method);
    }

    [Fact]
    public void DetectorNoiseIsAOneElementChain()
    {
        string pulse = "method: amplification, coupling: 10 kHz, duration: 80 us";
        var shorthand = ReadoutChains.For(ScenarioLoader.Parse(Scenario($"{pulse}, detector_noise: 20"), "a"));
        var chain = ReadoutChains.For(ScenarioLoader.Parse(Scenario($"{pulse}, chain: [{{ gain: 0 dB, noise: 20 }}]"), "b"));
        Assert.Equal(chain.AddedNoise, shorthand.AddedNoise);
    }

    [Fact]
    public void ChainParametersAreParameterPaths()
    {
        var scenario = ScenarioLoader.Parse(Scenario(Chain), "chain");
        var eta = ParameterPath.Parse("readout.chain[0].efficiency", scenario);
        var changed = ReadoutChains.For(eta.Set(scenario, 0.8)).AddedNoise;
        double n3 = KB * 2 / (H * 6e9);
        Assert.Equal(0.2 / 1.6 + 0.5 / 0.8 + n3 / 80, changed, 1e-12);
        Assert.Throws<InputException>(() => eta.Set(scenario, 1.5));
        var t = ParameterPath.Parse("readout.chain[2].noise_temperature", scenario);
        Assert.Equal(2, t.Get(scenario), 1e-15);
        Assert.Equal(0.4 / 1.2 + 0.5 / 0.6 + KB * 4 / (H * 6e9) / 60, ReadoutChains.For(t.Set(scenario, 4)).AddedNoise, 1e-12);
    }

    [Theory]
    [InlineData("added_noise: 1, " + Chain, "readout.added_noise", "not both")]
    [InlineData("method: amplification, coupling: 10 kHz, duration: 80 us, added_noise: 1", "readout.added_noise", "follows from the pulse")]
    [InlineData("method: amplification, coupling: 10 kHz, duration: 80 us, detector_noise: 3, " + Chain, "readout.detector_noise", "not both")]
    [InlineData("method: phenomenological", "readout", "added_noise")]
    [InlineData("chain: [{ efficiency: 0 }]", "readout.chain[0].efficiency", "out of range")]
    [InlineData("chain: [{ efficiency: 1.2 }]", "readout.chain[0].efficiency", "out of range")]
    [InlineData("chain: [{ efficiency: 0.5, gain: 3 dB }]", "readout.chain[0].gain", "loss")]
    [InlineData("chain: [{ gain: 20 dB }]", "readout.chain[0]", "noise_temperature")]
    [InlineData("chain: [{ gain: 20 dB, noise: 1, noise_temperature: 2 K }]", "readout.chain[0].noise_temperature", "not both")]
    [InlineData("chain: [{ gain: 20 dB, noise: 1, colour: red }]", "readout.chain[0].colour", "")]
    public void BadChainsAreRefusedNamingTheField(string readout, string field, string words)
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Scenario(readout), "bad"));
        Assert.Contains(e.Problems, p => p.Path == field && p.Message.Contains(words, StringComparison.Ordinal));
    }

    [Fact]
    public void NoiseTemperatureNeedsAFrequencyWhenNoCavityIsRead()
    {
        string chain = "chain: [{ gain: 40 dB, noise_temperature: 2 K }]";
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Scenario(chain, tones: "[]"), "bad"));
        Assert.Contains(e.Problems, p => p.Path == "readout.chain[0].noise_temperature" && p.Message.Contains("frequency"));
        // An explicit frequency converts it: k_B·T/(h·f) at 5 GHz.
        var ok = ReadoutChains.For(ScenarioLoader.Parse(Scenario("chain: [{ gain: 40 dB, noise_temperature: 2 K, frequency: 5 GHz }]", tones: "[]"), "ok"));
        Assert.Equal(KB * 2 / (H * 5e9), ok.AddedNoise, 1e-12);
    }
}

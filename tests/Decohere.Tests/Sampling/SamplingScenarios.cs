using Decohere.Scenarios;

namespace Decohere.Tests.Sampling;

/// <summary>Small invented scenarios for the sampler tests.</summary>
internal static class SamplingScenarios
{
    /// <summary>One mechanical mode relaxing from a hot thermal state towards its bath (effective model, no tones).</summary>
    public static Scenario Thermal(int shots = 20000) => ScenarioLoader.Parse($$"""
        name: test-thermal
        model: effective
        modes:
          bar: { kind: mechanical, frequency: 2 MHz, linewidth: 40 Hz, bath: { occupancy: 3 } }
        initial:
          bar: { state: thermal, occupancy: 9 }
        stages:
          - { name: relax, duration: 10 ms }
        readout: { mode: bar, added_noise: 0.7, shots: {{shots}}, stage: relax, delays: [0 ms, 1 ms, 4 ms] }
        output: { step: 100 us }
        seed: 42
        """, "test-thermal");

    /// <summary>A squeezed vacuum at an angle, displaced, decaying into a cold bath.</summary>
    public static Scenario Squeezed(int shots = 20000) => ScenarioLoader.Parse($$"""
        name: test-squeezed
        model: effective
        modes:
          bar: { kind: mechanical, frequency: 2 MHz, linewidth: 20 Hz, bath: { occupancy: 0.5 } }
        initial:
          bar: { state: squeezed, squeezing_db: 6, angle: 0.4 }
        stages:
          - { name: hold, duration: 5 ms }
        readout: { mode: bar, added_noise: 0.5, shots: {{shots}}, stage: hold, delays: [0 ms, 0.5 ms, 3 ms] }
        output: { step: 50 us }
        seed: 7
        """, "test-squeezed");

    /// <summary>Two mechanical modes with a static beam splitter; one starts displaced and hot, so correlations build up.</summary>
    public static Scenario TwoModes(int shots = 20000) => ScenarioLoader.Parse($$"""
        name: test-two-modes
        model: full
        modes:
          left: { kind: mechanical, frequency: 3 MHz, linewidth: 30 Hz, bath: { occupancy: 1 } }
          right: { kind: mechanical, frequency: 3 MHz, linewidth: 50 Hz, bath: { occupancy: 0.2 } }
        couplings:
          - { modes: [left, right], kind: beam-splitter, rate: 120 Hz }
        initial:
          left: { state: coherent, x: 2, p: -1 }
          right: { state: thermal, occupancy: 4 }
        stages:
          - { name: swap, duration: 4 ms }
        readout: { mode: left, added_noise: 1.1, shots: {{shots}}, stage: swap, delays: [0.3 ms, 1 ms, 2.5 ms] }
        output: { step: 50 us }
        seed: 99
        """, "test-two-modes");
}

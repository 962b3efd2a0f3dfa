using System.Globalization;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Lifetime;

public class LifetimeAnalysisTests
{
    /// <summary>One undriven mechanical mode starting squeezed: a pure damped mode.</summary>
    internal static Scenario Damped(double linewidthHz = 2, string bath = "occupancy: 30", double squeezingDb = 6, double durationS = 1e-3,
        string initial = "", double? addedNoise = null, long shots = 2000)
    {
        string init = initial.Length > 0 ? initial : $"{{ state: squeezed, squeezing_db: {F(squeezingDb)} dB, angle: 0.3 }}";
        string readout = addedNoise is { } n
            ? $"readout: {{ mode: m, added_noise: {F(n)}, shots: {shots}, stage: free, delays: [0 s] }}\n"
            : "";
        return ScenarioLoader.Parse($"""
            name: damped
            modes:
              m: {"{"} kind: mechanical, frequency: 1 MHz, linewidth: {F(linewidthHz)} Hz, bath: {"{"} {bath} {"}"} {"}"}
            initial:
              m: {init}
            stages:
              - {"{"} name: free, duration: {F(durationS)} s {"}"}
            {readout}
            """, "damped.yaml");
    }

    private static string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    [Theory]
    [InlineData(0.0, 1e-3)]   // crossing inside the one stage
    [InlineData(3.0, 1e-3)]   // a 3 dB threshold
    [InlineData(0.0, 2e-4)]   // crossing past the end of the scenario: the undriven continuation
    public void PhysicalLifetime_OfPureDampedMode_MatchesSingleModeLaw(double thresholdDb, double durationS)
    {
        // Source: the single-mode law V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½) (PHYSICS.md; the damped-mode solution of
        // dV/dt = AV + VAᵀ + D with A = −γ/2·I, D = γ(n+½)I), solved for V(t) = V_thr:
        // t = (1/γ) ln[(n_th + ½ − V(0)) / (n_th + ½ − V_thr)]; for V_thr = ½ it is t* = (1/γ) ln[(n_th + ½ − V(0))/n_th].
        var scenario = Damped(durationS: durationS);
        var core = LifetimeAnalysis.Analyze(scenario, new LifetimeSettings { ThresholdDb = thresholdDb });
        double gamma = 2 * Math.PI * 2, n = 30, v0 = 0.5 * Math.Pow(10, -0.6), vthr = 0.5 * Math.Pow(10, -thresholdDb / 10);
        double expected = Math.Log((n + 0.5 - v0) / (n + 0.5 - vthr)) / gamma;
        Assert.Equal(LifetimeStatus.Crossed, core.PhysicalStatus);
        Assert.Equal(1.0, core.PhysicalLifetimeS!.Value / expected, 1e-9);
        Assert.Equal(expected > durationS, core.PhysicalPastScenarioEnd);
        Assert.Equal("start of the scenario (no stage is driven)", core.Reference);
        // The approximation is exact for this mode, so the ratio is 1 to the root tolerance.
        Assert.Equal(1.0, core.Ratio!.Value, 1e-8);
    }

    [Fact]
    public void PhysicalLifetime_FollowsRuleOfThumb_WhenShortComparedWithDecayTime()
    {
        // Common practice (rule of thumb): a state squeezed by S dB stays below zero-point for about (½ − ½·10^(−S/10))/Γ_th,
        // Γ_th = γ·n_th, when that is ≪ 1/γ. Here n_th ≈ 76 (4.1 MHz at 15 mK), S = 3 dB; the expansion of the logarithm
        // puts the relative error near (½ − V(0))/(2 n_th) ≈ 0.17 %, so 0.5 % is allowed.
        var scenario = Damped(linewidthHz: 0.15, bath: "temperature: 15 mK", squeezingDb: 3, durationS: 1e-3);
        var core = LifetimeAnalysis.Analyze(scenario, new LifetimeSettings());
        double nth = Physics.Occupancy(1e6, 0.015);
        double rule = (0.5 - 0.5 * Math.Pow(10, -0.3)) / (2 * Math.PI * 0.15 * nth);
        Assert.True(rule * 2 * Math.PI * 0.15 < 0.01, "the rule's premise t ≪ 1/γ holds");
        Assert.InRange(core.PhysicalLifetimeS!.Value / rule, 0.995, 1.005);
    }

    [Fact]
    public void NotSqueezedAtStart_GivesZeroLifetimeAndNeverResolved()
    {
        // A thermal state (V = n + ½ ≥ ½, PHYSICS.md) is never below zero-point: physical lifetime 0, nothing to resolve.
        var scenario = Damped(initial: "{ state: thermal, occupancy: 0.2 }", addedNoise: 0.5);
        var core = LifetimeAnalysis.Analyze(scenario, new LifetimeSettings());
        Assert.Equal(LifetimeStatus.NotSqueezedAtStart, core.PhysicalStatus);
        Assert.Equal(0.0, core.PhysicalLifetimeS);
        Assert.Null(core.ObservableLifetimeS);
        Assert.Equal(LifetimeStatus.NeverResolved, core.ObservableStatus);
        Assert.Contains(core.Notes, n => n.Contains("not squeezed"));
    }

    [Fact]
    public void ObservableLifetime_ApproachesPhysical_AsNoiseVanishesAndShotsGrow()
    {
        // Limit of the χ² upper bound (NIST/SEMATECH e-Handbook sec. 7.2.3): ν s²/χ²_{1−c}(ν) → s² → σ² as ν → ∞, so with
        // n_add → 0 the median-measurement criterion V(τ) < V_thr·(1 − O(ν^{−½})) tends to the physical one. At N = 1e6 the
        // bound is ≈ 1.645·√(2/ν) ≈ 0.23 % tight, which moves the crossing by ≈ 0.3 % here; 1 % is allowed.
        var loose = LifetimeAnalysis.Analyze(Damped(addedNoise: 0.3, shots: 1000), new LifetimeSettings { Sensitivities = false });
        var tight = LifetimeAnalysis.Analyze(Damped(addedNoise: 1e-4, shots: 1_000_000), new LifetimeSettings { Sensitivities = false });
        double physical = tight.PhysicalLifetimeS!.Value;
        Assert.Equal(physical, loose.PhysicalLifetimeS!.Value, 1e-15);
        double gapLoose = physical - loose.ObservableLifetimeS!.Value, gapTight = physical - tight.ObservableLifetimeS!.Value;
        Assert.True(gapLoose > 0 && gapTight > 0, "the observable lifetime is shorter than the physical one");
        Assert.True(gapTight < 0.2 * gapLoose, $"gap shrinks: {gapLoose} → {gapTight}");
        Assert.InRange(tight.ObservableLifetimeS!.Value / physical, 0.99, 1.0);
    }

    [Fact]
    public void HugeAddedNoise_IsNeverResolved_NotANumber()
    {
        // With n_add ≫ V the critical ratio (V_thr + n)/(V + n) → 1 and the power tends to 1 − c = 0.05 < ½
        // (NIST/SEMATECH e-Handbook sec. 7.2.3): the squeezing is never resolved.
        var core = LifetimeAnalysis.Analyze(Damped(addedNoise: 1e4, shots: 2000), new LifetimeSettings { Sensitivities = false });
        Assert.Null(core.ObservableLifetimeS);
        Assert.Equal(LifetimeStatus.NeverResolved, core.ObservableStatus);
        Assert.InRange(core.PowerAtStart!.Value, 0.0, 0.5);
    }

    [Fact]
    public void ColdBathBelowThreshold_HasNoFiniteLifetime()
    {
        // A bath at zero occupancy relaxes the mode to vacuum (V → ½, PHYSICS.md), which stays below a −1 dB threshold (V_thr ≈ 0.63).
        var core = LifetimeAnalysis.Analyze(Damped(bath: "occupancy: 0"), new LifetimeSettings { ThresholdDb = -1 });
        Assert.Null(core.PhysicalLifetimeS);
        Assert.Equal(LifetimeStatus.BeyondHorizon, core.PhysicalStatus);
        Assert.Null(core.ApproximateLifetimeS);
    }

    [Fact]
    public void Sensitivities_HaveThePhysicalSign()
    {
        // Common practice: a hotter bath or a broader linewidth raises Γ_th = γ n_th and shortens the lifetime; more added noise
        // shortens only the observable one; more shots lengthen only the observable one.
        var report = LifetimeAnalysis.Solve(Damped(addedNoise: 0.5, shots: 2000, bath: "temperature: 15 mK", linewidthHz: 0.15), new LifetimeSettings());
        var by = report.Sensitivities.ToDictionary(s => s.Parameter);
        Assert.True(by["modes.m.bath.temperature"].PhysicalChangeS < 0);
        Assert.True(by["modes.m.linewidth"].PhysicalChangeS < 0);
        Assert.Equal(0.0, by["readout.added_noise"].PhysicalChangeS);
        Assert.True(by["readout.added_noise"].ObservableChangeS < 0);
        Assert.True(by["readout.shots"].ObservableChangeS > 0);
        // ×2 linewidth doubles γ and Γ_th: the single-mode law gives exactly half the lifetime.
        Assert.Equal(-0.5 * report.Core.PhysicalLifetimeS!.Value, by["modes.m.linewidth"].PhysicalChangeS!.Value, 1e-9 * report.Core.PhysicalLifetimeS!.Value);
    }

    [Fact]
    public void BadSettings_NameTheSetting()
    {
        var s = Damped();
        Assert.Contains("confidence:", Assert.Throws<InputException>(() => LifetimeAnalysis.Analyze(s, new LifetimeSettings { Confidence = 1.2 })).Message);
        Assert.Contains("reference stage: unknown stage 'nope'", Assert.Throws<InputException>(() => LifetimeAnalysis.Analyze(s, new LifetimeSettings { AfterStage = "nope" })).Message);
    }
}

using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Model.Readouts;
using Decohere.Scenarios;

namespace Decohere.Analyses.Check;

/// <summary>Derived quantities of a drive tone. Rates are angular (s⁻¹).</summary>
public sealed record ToneReport(string Stage, Tone Tone, double CouplingRate, double Cooperativity, double SidebandResolution);

/// <summary>Derived quantities of a mechanical mode's intrinsic bath.</summary>
public sealed record MechanicalReport(Mode Mode, double Occupancy, double TemperatureK, double ThermalDecoherenceRate)
{
    /// <summary>1/(γ n_th), the time to gain one quantum from the ground state (s).</summary>
    public double ThermalDecoherenceTime => 1 / ThermalDecoherenceRate;
}

/// <summary>
/// Predicted steady squeezing of a two-tone (red G₋, blue G₊ &lt; G₋) stage on one mechanical mode:
/// the bad-cavity formula of A. Kronwald, F. Marquardt, A. A. Clerk, Phys. Rev. A 88, 063833 (2013), and the exact
/// rotating-wave result with the cavity kept, V_min = [Γe^{−2r}(n_c+½) + γ(n_th+½)c]/(Γ + γc), c = 1 + (Γ+γ)/κ.
/// </summary>
public sealed record TwoToneReport(string Stage, string Mechanical, string Cavity, double SqueezingParameter,
    double DampingRate, double VarMinBadCavity, double VarMinCavityKept)
{
    /// <summary>Squeezing in dB of the bad-cavity formula.</summary>
    public double SqueezingDbBadCavity => Physics.SqueezingDb(VarMinBadCavity);

    /// <summary>Squeezing in dB with the cavity kept.</summary>
    public double SqueezingDbCavityKept => Physics.SqueezingDb(VarMinCavityKept);
}

/// <summary>Stability and steady state of a stage as the engine computes them.</summary>
public sealed record StageReport(Stage Stage, double StartS, Stability Stability, GaussianState? SteadyState, double SteadyResidual);

/// <summary>
/// What a physicist checks before running a scenario: couplings, cooperativities, sideband resolution, bath
/// occupancies and decoherence rates, stage stability, predicted squeezing, and the warnings where a model's
/// assumptions break.
/// </summary>
public sealed record ScenarioReport(
    ImmutableArray<ToneReport> Tones,
    ImmutableArray<MechanicalReport> Mechanical,
    ImmutableArray<StageReport> Stages,
    ImmutableArray<TwoToneReport> TwoTone,
    IReadoutChain? Readout,
    ImmutableArray<string> Warnings)
{
    /// <summary>Analyses a scenario with its solved dynamics.</summary>
    public static ScenarioReport Of(Dynamics dynamics)
    {
        var s = dynamics.Scenario;
        var warnings = ImmutableArray.CreateBuilder<string>();
        var tones = ImmutableArray.CreateBuilder<ToneReport>();
        foreach (var stage in s.Stages)
            foreach (var tone in stage.Tones)
            {
                var cavity = s.ModeNamed(tone.Cavity);
                var mech = s.ModeNamed(tone.Mechanical);
                double g = Physics.Angular(tone.CouplingHz);
                double coop = Physics.Cooperativity(tone.CouplingHz, cavity.LinewidthHz, mech.LinewidthHz);
                double resolution = cavity.LinewidthHz / mech.FrequencyHz;
                tones.Add(new ToneReport(stage.Name, tone, g, coop, resolution));
                if (s.Model == ModelKind.Effective && g > 0.1 * cavity.DecayRate)
                    warnings.Add($"stage '{stage.Name}': G = {Quantity.Format(tone.CouplingHz, Dimension.Frequency)} is not ≪ κ = 2π·{Quantity.Format(cavity.LinewidthHz, Dimension.Frequency)} (G/κ = {g / cavity.DecayRate:G3}); the effective model's adiabatic elimination needs G ≪ κ, use model: full");
                if (g > 0.1 * mech.AngularFrequency)
                    warnings.Add($"stage '{stage.Name}': G = {Quantity.Format(tone.CouplingHz, Dimension.Frequency)} is not ≪ ω_m of '{mech.Name}'; the rotating-wave approximation of the linearised coupling fails");
            }
        foreach (var (cavity, mech) in tones.Select(t => (t.Tone.Cavity, t.Tone.Mechanical)).Distinct())
        {
            var c = s.ModeNamed(cavity);
            var m = s.ModeNamed(mech);
            double ratio = c.LinewidthHz / m.FrequencyHz;
            bool corrected = s.Model == ModelKind.Effective && s.SidebandCorrections;
            if (ratio > 0.1)
                warnings.Add($"κ/ω_m = {ratio:G3} for '{cavity}' on '{mech}' (> 0.1): sidebands are not resolved and the rotating-wave model " +
                             (corrected ? "keeps only the leading off-resonant correction" : "neglects off-resonant scattering; consider model: effective with sideband_corrections: true"));
        }

        var mechanical = s.Modes.Where(m => m.Kind == ModeKind.Mechanical)
            .Select(m => new MechanicalReport(m, m.Bath.Occupancy, m.Bath.TemperatureK ?? Physics.Temperature(m.FrequencyHz, m.Bath.Occupancy),
                Physics.ThermalDecoherenceRate(m.DecayRate, m.Bath.Occupancy)))
            .ToImmutableArray();
        foreach (var m in s.Modes)
            if (m.QualityFactor < 10)
                warnings.Add($"mode '{m.Name}' has Q = {m.QualityFactor:G3}: the rotating-wave damping model needs a high quality factor");
        if (s.Model == ModelKind.Effective)
            foreach (var name in s.Initial.Keys.Where(k => s.ModeNamed(k).Kind == ModeKind.Cavity))
                warnings.Add($"initial.{name} is ignored: the effective model eliminates the cavity");

        var stages = ImmutableArray.CreateBuilder<StageReport>();
        for (int i = 0; i < s.Stages.Length; i++)
        {
            var stability = dynamics.Stabilities[i];
            GaussianState? steady = stability.IsStable ? dynamics.SteadyState(i) : null;
            stages.Add(new StageReport(s.Stages[i], dynamics.StageStarts[i], stability, steady, steady is null ? double.NaN : dynamics.SteadyResidual(i)));
            if (steady is not null)
                foreach (var w in dynamics.SteadySolution(i).Warnings)
                    warnings.Add($"stage '{s.Stages[i].Name}' steady state: {w}");
        }

        var readout = s.Readout is null ? null : ReadoutChains.For(s);
        if (readout is not null && readout.AddedNoise < Physics.ZeroPointVariance)
            warnings.Add($"the readout's added noise {readout.AddedNoise:G4} quanta is below ½, the quantum limit of a phase-insensitive readout of both quadratures (C. M. Caves, Phys. Rev. D 26, 1817 (1982))");

        return new ScenarioReport(tones.ToImmutable(), mechanical, stages.ToImmutable(), TwoToneReports(s), readout, warnings.ToImmutable());
    }

    private static ImmutableArray<TwoToneReport> TwoToneReports(Scenario s)
    {
        var result = ImmutableArray.CreateBuilder<TwoToneReport>();
        foreach (var stage in s.Stages)
            foreach (var group in stage.Tones.GroupBy(t => (t.Cavity, t.Mechanical)))
            {
                var red = group.Where(t => t.Sideband == Sideband.Red).ToArray();
                var blue = group.Where(t => t.Sideband == Sideband.Blue).ToArray();
                if (red.Length != 1 || blue.Length != 1) continue;
                double gm = Physics.Angular(red[0].CouplingHz), gp = Physics.Angular(blue[0].CouplingHz);
                if (gp >= gm) continue;
                var cavity = s.ModeNamed(group.Key.Cavity);
                var mech = s.ModeNamed(group.Key.Mechanical);
                double kappa = cavity.DecayRate, gamma = mech.DecayRate;
                double nc = s.BathOf(cavity, stage).Occupancy, nth = s.BathOf(mech, stage).Occupancy;
                double r = Math.Atanh(gp / gm);
                double squeeze = (gm - gp) / (gm + gp);   // e^{−2r}
                double rate = 4 * (gm * gm - gp * gp) / kappa;
                double badCavity = (gamma * (nth + 0.5) + rate * squeeze * (nc + 0.5)) / (gamma + rate);
                double c = 1 + (rate + gamma) / kappa;
                double kept = (rate * squeeze * (nc + 0.5) + gamma * (nth + 0.5) * c) / (rate + gamma * c);
                result.Add(new TwoToneReport(stage.Name, mech.Name, cavity.Name, r, rate, badCavity, kept));
            }
        return result.ToImmutable();
    }
}

using System.Collections.Immutable;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Sampling;

/// <summary>
/// One shot's device parameters drawn from the scenario's <c>jitter</c> block (independent Gaussians):
/// a mechanical frequency offset becomes an extra detuning of that mode in every stage; each distinct tone
/// (cavity, mechanical, sideband) has its coupling scaled by one factor 1 + σ·ξ shared by every stage that plays it;
/// a bath occupancy is shifted (clipped at 0) in the mode's own bath and in every stage override of it.
/// </summary>
public static class JitterDraw
{
    /// <summary>A copy of <paramref name="scenario"/> with jittered parameters; the scenario itself when jitter is off.</summary>
    public static Scenario Apply(Scenario scenario, ref RandomStream random)
    {
        var jitter = scenario.Jitter;
        if (jitter.IsNone) return scenario;

        // Draws happen in a fixed order (sorted names, then stage/tone order) so a stream always maps to the same parameters.
        var detuning = new Dictionary<string, double>();
        foreach (var (mode, sigma) in jitter.FrequencyHz.OrderBy(p => p.Key, StringComparer.Ordinal))
            detuning[mode] = sigma * random.NextNormal();
        var occupancyShift = new Dictionary<string, double>();
        foreach (var (mode, sigma) in jitter.Occupancy.OrderBy(p => p.Key, StringComparer.Ordinal))
            occupancyShift[mode] = sigma * random.NextNormal();
        var factor = new Dictionary<(string, string, Sideband), double>();
        if (jitter.CouplingRelative > 0)
            foreach (var tone in scenario.Stages.SelectMany(s => s.Tones))
                if (!factor.ContainsKey((tone.Cavity, tone.Mechanical, tone.Sideband)))
                    factor[(tone.Cavity, tone.Mechanical, tone.Sideband)] = Math.Max(0, 1 + jitter.CouplingRelative * random.NextNormal());

        Bath Shift(string mode, Bath bath) => occupancyShift.TryGetValue(mode, out double d) ? new Bath(Math.Max(0, bath.Occupancy + d)) : bath;

        var modes = scenario.Modes.Select(m => m with { Bath = Shift(m.Name, m.Bath) }).ToImmutableArray();
        var stages = scenario.Stages.Select(stage =>
        {
            var detunings = stage.DetuningsHz;
            foreach (var (mode, d) in detuning) detunings = detunings.SetItem(mode, detunings.GetValueOrDefault(mode) + d);
            var overrides = stage.BathOverrides.ToImmutableDictionary(p => p.Key, p => Shift(p.Key, p.Value));
            var tones = stage.Tones.Select(t => factor.TryGetValue((t.Cavity, t.Mechanical, t.Sideband), out double f)
                ? t with { CouplingHz = t.CouplingHz * f } : t).ToImmutableArray();
            return stage with { DetuningsHz = detunings, BathOverrides = overrides, Tones = tones };
        }).ToImmutableArray();
        return scenario with { Modes = modes, Stages = stages };
    }
}

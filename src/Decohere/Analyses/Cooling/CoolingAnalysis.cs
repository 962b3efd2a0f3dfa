using System.Collections.Immutable;
using System.Diagnostics;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Cooling;

/// <summary>A measured steady occupancy at a cooperativity, with its standard error when known.</summary>
public sealed record CoolingPoint(double Cooperativity, double Occupancy, double? Error);

/// <summary>Settings of a cooling curve.</summary>
public sealed record CoolingSettings
{
    /// <summary>Cooperativities C = 4G²/(κγ) of the cooling tone.</summary>
    public ImmutableArray<double> Cooperativities { get; init; } = Ranges.LogSpaced(0.1, 1e5, 61);

    /// <summary>The stage of the cooling tone; null: the first stage with a red tone.</summary>
    public string? Stage { get; init; }

    /// <summary>Index of the cooling tone in the stage; null: its first red tone.</summary>
    public int? Tone { get; init; }

    /// <summary>Single-sideband phase noise of the tone at the mechanical frequency, dBc/Hz; null: none.</summary>
    public double? PhaseNoiseDbcPerHz { get; init; }

    /// <summary>Suppression of the phase noise by a filter (dB, ≥ 0), e.g. a filter cavity in the drive line.</summary>
    public double FilterDb { get; init; }

    /// <summary>Single-photon coupling g₀/2π (Hz): converts the cooperativity to intracavity photons for the phase noise.</summary>
    public double? SinglePhotonCouplingHz { get; init; }

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (Cooperativities.IsDefaultOrEmpty) throw new InputException("cooperativity: at least one value is needed");
        if (Cooperativities.Any(c => !(c > 0) || !double.IsFinite(c))) throw new InputException("cooperativity: every value must be finite and > 0");
        if (PhaseNoiseDbcPerHz is { } l && !(l < 0 && l > -300)) throw new InputException($"phase noise: {l} dBc/Hz is out of range; allowed -300 to 0");
        if (!(FilterDb >= 0 && FilterDb < 300)) throw new InputException($"filter: {FilterDb} dB is out of range; allowed 0 to 300 dB");
        if (PhaseNoiseDbcPerHz is not null && !(SinglePhotonCouplingHz > 0))
            throw new InputException("single-photon coupling: phase noise needs g0 (Hz) to convert the cooperativity to intracavity photons");
    }
}

/// <summary>The pieces of the steady occupancy at one cooperativity; they sum to <see cref="Occupancy"/> (the occupancy is affine in the bath occupancies).</summary>
public sealed record CoolingRow(double Cooperativity, double CouplingHz, double CavityOccupancy, double CavityHeating, double PhaseNoise,
    double Occupancy, double Thermal, double CavityBase, double HeatingShare, double PhaseNoiseShare, double Quantum)
{
    /// <summary>The largest share: thermal, cavity_bath, drive_heating, phase_noise or quantum.</summary>
    public string Limit => new[] { ("thermal", Thermal), ("cavity_bath", CavityBase), ("drive_heating", HeatingShare), ("phase_noise", PhaseNoiseShare), ("quantum", Quantum) }
        .MaxBy(p => p.Item2).Item1;
}

/// <summary>A heating law fitted to measured occupancies: extra cavity quanta a·C^b.</summary>
public sealed record HeatingFit(double Coefficient, double CoefficientError, double Exponent, double ExponentError,
    double? CoefficientLow, double? CoefficientHigh, double? ExponentLow, double? ExponentHigh,
    double ChiSquare, int DegreesOfFreedom, bool ErrorsGiven, ImmutableArray<double> Fitted);

/// <summary>A cooling curve and what limits it.</summary>
public sealed record CoolingResult(
    Scenario Scenario, CoolingSettings Settings, string Stage, int Tone, string Mechanical, string Cavity,
    ImmutableArray<CoolingRow> Rows, CoolingRow Minimum, bool MinimumAtEdge,
    ImmutableArray<CoolingPoint> Data, HeatingFit? Fit,
    Provenance Provenance, ImmutableArray<string> Warnings, WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);
}

/// <summary>
/// Steady occupancy of a mechanical mode against the cooperativity of a red tone, with a cavity bath that grows with the
/// drive and the tone's phase noise as extra cavity noise, by the exact steady state of the scenario's model (sideband
/// cooling: F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007); I. Wilson-Rae et al., Phys. Rev. Lett. 99, 093901 (2007)).
/// </summary>
public static class CoolingAnalysis
{
    /// <summary>Solves the curve, its minimum and, with data, the heating law's fit.</summary>
    /// <exception cref="InputException">A setting is out of range, or the stage has no red tone.</exception>
    public static CoolingResult Solve(Scenario scenario, CoolingSettings settings, IReadOnlyList<CoolingPoint>? data = null)
    {
        long start = Stopwatch.GetTimestamp();
        settings.Validate();
        var warnings = new List<string>();
        var (stageIndex, toneIndex) = Locate(scenario, settings);
        var stage = scenario.Stages[stageIndex];
        var tone = stage.Tones[toneIndex];
        var cavity = scenario.ModeNamed(tone.Cavity);
        var law = scenario.BathOf(cavity, stage).Heating;
        var rows = settings.Cooperativities.Select(c => Row(scenario, stageIndex, toneIndex, c, law, settings)).ToImmutableArray();
        var (minimum, edge) = Minimum(scenario, stageIndex, toneIndex, law, settings, rows);
        if (edge) warnings.Add($"the lowest occupancy lies at the edge of the cooperativity range (C = {minimum.Cooperativity:G4}); widen the range to find the minimum");
        HeatingFit? fit = null;
        if (data is { Count: > 0 })
        {
            fit = FitHeating(scenario, stageIndex, toneIndex, settings, data, warnings);
        }
        return new CoolingResult(scenario, settings, stage.Name, toneIndex, tone.Mechanical, tone.Cavity, rows, minimum, edge,
            [.. data ?? []], fit, Provenance.For(scenario), [.. warnings], WorkStatistics.Since(start, rows.Length));
    }

    /// <summary>The stage and tone index of the cooling tone the settings name (default: the first red tone of the first stage with one).</summary>
    /// <exception cref="InputException">The stage is unknown or has no red tone there.</exception>
    public static (int Stage, int Tone) Locate(Scenario scenario, CoolingSettings settings)
    {
        int stage = settings.Stage is { } name
            ? scenario.Stages.Select((s, i) => (s, i)).FirstOrDefault(p => p.s.Name == name, (null!, -1)).Item2
            : scenario.Stages.Select((s, i) => (s, i)).FirstOrDefault(p => p.s.Tones.Any(t => t.Sideband == Sideband.Red), (null!, -1)).Item2;
        if (stage < 0)
            throw new InputException(settings.Stage is null ? "stage: no stage has a red tone to cool with"
                : $"stage: unknown stage '{settings.Stage}'; stages: {string.Join(", ", scenario.Stages.Select(s => s.Name))}");
        var tones = scenario.Stages[stage].Tones;
        int tone = settings.Tone ?? tones.Select((t, i) => (t, i)).FirstOrDefault(p => p.t.Sideband == Sideband.Red, (null!, -1)).Item2;
        if (tone < 0 || tone >= tones.Length || tones[tone].Sideband != Sideband.Red)
            throw new InputException($"tone: stage '{scenario.Stages[stage].Name}' has no red tone{(settings.Tone is { } k ? $" at index {k}" : "")} (it has {tones.Length} tone{(tones.Length == 1 ? "" : "s")})");
        return (stage, tone);
    }

    /// <summary>
    /// Extra cavity occupancy from the tone's phase noise. A tone of power P (photon flux Φ = P/ħω_L) carries noise
    /// sidebands of L(f) (single-sideband, dBc/Hz) each; for a red tone the one at ω_L + ω_m falls on the cavity, where it is
    /// a thermal-like input of Φ·L(f_m) photons per second per Hz, i.e. that many quanta, entering at κ_ext and so
    /// n_φ = (κ_ext/κ)·Φ·L. The intracavity photons of the tone, n = κ_ext Φ/((κ/2)² + ω_m²) ≈ κ_ext Φ/ω_m² (resolved
    /// sidebands), eliminate Φ and κ_ext: n_φ = n·ω_m²·L/κ (ω_m, κ in s⁻¹, L in 1/Hz), with n = G²/g₀² and
    /// G² = Cκγ/4. The scaling with n·ω_m² follows P. Rabl et al., Phys. Rev. A 80, 063819 (2009) (recalled from memory;
    /// the form used here is derived as above).
    /// </summary>
    public static double PhaseNoiseOccupancy(double cooperativity, double kappa, double gamma, double omegaM, double g0, double dbcPerHz, double filterDb)
    {
        double photons = cooperativity * kappa * gamma / 4 / (g0 * g0);
        return photons * omegaM * omegaM * Math.Pow(10, (dbcPerHz - filterDb) / 10) / kappa;
    }

    /// <summary>The occupancy and its parts at cooperativity C, with the heating law <paramref name="law"/>.</summary>
    public static CoolingRow Row(Scenario scenario, int stageIndex, int toneIndex, double cooperativity, HeatingLaw? law, CoolingSettings settings) =>
        Evaluate(scenario, stageIndex, toneIndex, cooperativity, law, settings, shares: true);

    // Without shares only the total is solved (the fit needs nothing else); the share fields are then NaN.
    private static CoolingRow Evaluate(Scenario scenario, int stageIndex, int toneIndex, double cooperativity, HeatingLaw? law, CoolingSettings settings, bool shares)
    {
        var stage = scenario.Stages[stageIndex];
        var tone = stage.Tones[toneIndex];
        var cavity = scenario.ModeNamed(tone.Cavity);
        var mech = scenario.ModeNamed(tone.Mechanical);
        double kappa = cavity.DecayRate, gamma = mech.DecayRate;
        double couplingHz = Physics.CouplingForCooperativity(cooperativity, cavity.LinewidthHz, mech.LinewidthHz);
        var driven = stage with { Tones = stage.Tones.SetItem(toneIndex, tone with { CouplingHz = couplingHz, Form = CouplingForm.Direct }) };
        double nc0 = scenario.BathOf(cavity, stage).Occupancy;
        double heating = law?.ExcessAt(ModelBuilder.Cooperativity(scenario, cavity, driven)) ?? 0;
        double phase = settings.PhaseNoiseDbcPerHz is { } l
            ? PhaseNoiseOccupancy(cooperativity, kappa, gamma, mech.AngularFrequency, Physics.Angular(settings.SinglePhotonCouplingHz!.Value), l, settings.FilterDb)
            : 0;
        double nth = scenario.BathOf(mech, stage).Occupancy;
        // The steady covariance is affine in the bath occupancies (D is), so each source's share is its own solve minus the
        // solve with both baths empty; what remains there is the zero-point (quantum) part and the other modes' baths.
        LinearModel Model(double mechanical, double cav) => ModelBuilder.Build(scenario, driven with
        {
            BathOverrides = driven.BathOverrides.SetItem(mech.Name, new Bath(mechanical)).SetItem(cavity.Name, new Bath(cav)),
        });
        double Occupancy(LinearModel model)
        {
            var v = Lyapunov.Solve(model.Drift, model.Diffusion).Covariance;
            int j = model.IndexOf(mech.Name);
            return Physics.ModeOccupancy(v[2 * j, 2 * j], v[2 * j + 1, 2 * j + 1], 0, 0);
        }
        double Solve(double mechanical, double cav) => Occupancy(Model(mechanical, cav));
        // The bath occupancies enter D alone (the drift of √(n+1)·J and √n·J† does not depend on n), so one stability check
        // covers every solve below; Lyapunov.Solve still refuses an unstable drift on its own.
        var full = Model(nth, nc0 + heating + phase);
        var stability = Stability.Of(full.Drift);
        if (!stability.IsStable)
            throw new UnstableDynamicsException(stability.GrowthRate, $"stage '{stage.Name}' at C = {cooperativity:G4} has no steady state (it grows at {stability.GrowthRate:G4} s⁻¹)");
        double total = Occupancy(full);
        if (!shares) return new CoolingRow(cooperativity, couplingHz, nc0 + heating + phase, heating, phase, total, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);
        double quantum = Solve(0, 0);
        double thermal = Solve(nth, 0) - quantum;
        double baseShare = Solve(0, nc0) - quantum;
        double heatShare = Solve(0, heating) - quantum;
        double phaseShare = Solve(0, phase) - quantum;
        return new CoolingRow(cooperativity, couplingHz, nc0 + heating + phase, heating, phase, total, thermal, baseShare, heatShare, phaseShare, quantum);
    }

    // The grid's lowest point refined by golden-section search on ln C between its neighbours (J. Kiefer, Proc. Am. Math.
    // Soc. 4, 502 (1953)); at the edge of the grid the edge point is returned with a warning.
    private static (CoolingRow, bool) Minimum(Scenario scenario, int stage, int tone, HeatingLaw? law, CoolingSettings settings, ImmutableArray<CoolingRow> rows)
    {
        var sorted = rows.OrderBy(r => r.Cooperativity).ToArray();
        int k = Array.IndexOf(sorted, sorted.MinBy(r => r.Occupancy));
        if (k == 0 || k == sorted.Length - 1) return (sorted[k], sorted.Length > 1);
        double a = Math.Log(sorted[k - 1].Cooperativity), b = Math.Log(sorted[k + 1].Cooperativity);
        double N(double u) => Evaluate(scenario, stage, tone, Math.Exp(u), law, settings, shares: false).Occupancy;
        double ratio = (Math.Sqrt(5) - 1) / 2;
        double c = b - ratio * (b - a), d = a + ratio * (b - a), fc = N(c), fd = N(d);
        for (int i = 0; i < 80 && b - a > 1e-10; i++)
        {
            if (fc < fd) { b = d; d = c; fd = fc; c = b - ratio * (b - a); fc = N(c); }
            else { a = c; c = d; fc = fd; d = a + ratio * (b - a); fd = N(d); }
        }
        var best = Row(scenario, stage, tone, Math.Exp(0.5 * (a + b)), law, settings);
        return (best.Occupancy <= sorted[k].Occupancy ? best : sorted[k], false);
    }

    /// <summary>
    /// Fits the heating law's coefficient a and exponent b to measured occupancies. With standard errors the likelihood is
    /// Gaussian with them (−2 ln L = χ²); without, least squares with σ profiled out. Intervals are 95% profile likelihood.
    /// </summary>
    private static HeatingFit FitHeating(Scenario scenario, int stage, int tone, CoolingSettings settings, IReadOnlyList<CoolingPoint> data,
        List<string> warnings)
    {
        bool errors = data.All(p => p.Error is > 0);
        if (!errors && data.Any(p => p.Error is not null)) warnings.Add("data: some rows have no occupancy_err; all errors ignored (least squares)");
        double Model(double[] b, double c) => HeatedOccupancy(scenario, stage, tone, c, b[0], b[1], settings);
        var start = HeatingStart(scenario, stage, tone, settings, data);
        FitParameter[] parameters = [new("coefficient", start[0], ParameterDomain.Positive), new("exponent", start[1], ParameterDomain.Positive)];
        var ml = new MaximumLikelihoodSettings { Parallel = false };
        double[] x = [.. data.Select(p => p.Cooperativity)], y = [.. data.Select(p => p.Occupancy)];
        MaximumLikelihoodResult fit;
        double[] se;
        if (errors)
        {
            fit = MaximumLikelihood.Fit(b => data.Sum(p => Math.Pow((p.Occupancy - Model(b, p.Cooperativity)) / p.Error!.Value, 2)), parameters, ml);
            se = fit.StandardErrors;
        }
        else
        {
            var ls = LeastSquares.Fit(x, y, Model, parameters, ml);
            (fit, se) = (ls.Fit, ls.StandardErrors);
        }
        warnings.AddRange(fit.Warnings);
        var fitted = x.Select(c => Model(fit.Estimates, c)).ToImmutableArray();
        double chi2 = errors ? fit.Minimum : data.Select((p, i) => Math.Pow(p.Occupancy - fitted[i], 2)).Sum();
        if (errors && data.Count > 2 && 1 - MathNet.Numerics.Distributions.ChiSquared.CDF(data.Count - 2, chi2) < 1e-3)
            warnings.Add($"the heating law does not describe the data within their errors (χ² = {chi2:G4} for {data.Count - 2} degrees of freedom); its intervals assume it does");
        return new HeatingFit(fit.Estimates[0], se[0], fit.Estimates[1], se[1],
            fit.Intervals[0]?.Low, fit.Intervals[0]?.High, fit.Intervals[1]?.Low, fit.Intervals[1]?.High,
            chi2, data.Count - 2, errors, fitted);
    }

    /// <summary>
    /// The steady occupancy at cooperativity C when the tone's cavity is heated by the law a·C^b: the model the heating fit
    /// fits. A trial law that heats the cavity past double range is an impossible point, +∞ to an optimiser.
    /// </summary>
    public static double HeatedOccupancy(Scenario scenario, int stage, int tone, double cooperativity, double coefficient, double exponent, CoolingSettings settings) =>
        new HeatingLaw(coefficient, exponent) is var trial && trial.ExcessAt(cooperativity) is var excess && double.IsFinite(excess) && excess < 1e15
            ? Evaluate(scenario, stage, tone, cooperativity, trial, settings, shares: false).Occupancy
            : double.PositiveInfinity;

    /// <summary>A start for the heating law (a, b): the scenario's own power law when it has one, else <see cref="StartFromData"/>.</summary>
    public static double[] HeatingStart(Scenario scenario, int stage, int tone, CoolingSettings settings, IReadOnlyList<CoolingPoint> data)
    {
        var law = scenario.BathOf(scenario.ModeNamed(scenario.Stages[stage].Tones[tone].Cavity), scenario.Stages[stage]).Heating;
        return law is { Table.IsDefaultOrEmpty: true, Coefficient: > 0 } ? [law.Coefficient, law.Exponent] : StartFromData(scenario, stage, tone, settings, data);
    }

    // A start for (a, b): b = 1, a from the point that rises most above the curve without heating.
    private static double[] StartFromData(Scenario scenario, int stage, int tone, CoolingSettings settings, IReadOnlyList<CoolingPoint> data)
    {
        var best = data.MaxBy(p => p.Cooperativity)!;
        var row = Row(scenario, stage, tone, best.Cooperativity, new HeatingLaw(1, 1), settings);
        // The heating share is linear in a: a = excess occupancy / (share per unit a).
        double perUnit = row.HeatingShare;
        double excess = best.Occupancy - (row.Occupancy - perUnit);
        return [excess > 0 && perUnit > 0 ? excess / perUnit : 1e-6, 1];
    }
}

using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Lifetime;

/// <summary>Settings of a lifetime analysis (a light settings object; the scenario is the problem).</summary>
public sealed record LifetimeSettings
{
    /// <summary>Stage whose end is the reference; null: the last stage with tones.</summary>
    public string? AfterStage { get; init; }

    /// <summary>Threshold in dB of squeezing (0 dB: zero-point, var_min = ½).</summary>
    public double ThresholdDb { get; init; }

    /// <summary>One-sided confidence of the upper bound on the inferred variance, in (0.5, 1).</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Mode followed; null: the readout mode, else the first mechanical mode.</summary>
    public string? Mode { get; init; }

    /// <summary>Relative tolerance of the root finder on the lifetimes.</summary>
    public double RelativeTolerance { get; init; } = 1e-9;

    /// <summary>Whether to compute the finite-difference sensitivities (four more analyses of modified scenarios).</summary>
    public bool Sensitivities { get; init; } = true;

    /// <summary>Rows of the delay table.</summary>
    public int CurvePoints { get; init; } = 241;

    /// <summary>
    /// Values measured elsewhere that the scenario already holds (see <see cref="MeasuredValues.Apply"/>): each with a standard
    /// error adds a +1σ sensitivity, and together they give the lifetimes' standard deviations.
    /// </summary>
    public MeasuredValues Measured { get; init; } = MeasuredValues.None;

    /// <summary>Refuses a reference stage the scenario does not have, listing the stages it has.</summary>
    /// <exception cref="InputException">Unknown stage.</exception>
    public static void CheckReferenceStage(Scenario scenario, string? stage)
    {
        if (stage is not null && !scenario.Stages.Any(s => s.Name == stage))
            throw new InputException($"reference stage: unknown stage '{stage}'; stages: {string.Join(", ", scenario.Stages.Select(s => s.Name))}");
    }

    /// <summary>Variance at a threshold in dB: var = ½·10^(−dB/10).</summary>
    public static double ThresholdVariance(double db) => Physics.VarianceAtSqueezing(db);

    /// <summary>Checks the values, and with a scenario the reference stage; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range or the stage unknown.</exception>
    public void Validate(Scenario? scenario = null)
    {
        if (scenario is not null) CheckReferenceStage(scenario, AfterStage);
        if (!double.IsFinite(ThresholdDb) || ThresholdDb < -30 || ThresholdDb > 60)
            throw new InputException($"threshold: {ThresholdDb} dB is out of range; allowed -30 dB to 60 dB");
        if (!(Confidence > 0.5 && Confidence < 1))
            throw new InputException($"confidence: {Confidence} is out of range; allowed 0.5 < C < 1 (e.g. 0.95)");
        if (!(RelativeTolerance > 0 && RelativeTolerance < 0.1)) throw new InputException("relative tolerance must be in (0, 0.1)");
        if (CurvePoints < 2) throw new InputException("curve points must be >= 2");
    }
}

/// <summary>Why a lifetime has the value it has.</summary>
public enum LifetimeStatus
{
    /// <summary>The criterion fails at a finite delay, found by root finding.</summary>
    Crossed,
    /// <summary>The state is not squeezed below the threshold at the reference: lifetime 0.</summary>
    NotSqueezedAtStart,
    /// <summary>The squeezing outlives the search horizon (e.g. a bath colder than the threshold): no finite lifetime.</summary>
    BeyondHorizon,
    /// <summary>The readout never resolves the squeezing (observable lifetime only): null.</summary>
    NeverResolved,
    /// <summary>The scenario has no readout (observable lifetime only).</summary>
    NoReadout,
}

/// <summary>How the lifetimes change when one parameter of the scenario changes (one-sided finite difference on the exact model).</summary>
public sealed record LifetimeSensitivity(
    string Parameter, string Change, double From, double To,
    double? PhysicalLifetimeS, double? ObservableLifetimeS, double? PhysicalChangeS, double? ObservableChangeS);

/// <summary>The readout the observable lifetime assumes: the readout model's added noise (quanta, input-referred) and method.</summary>
public sealed record ReadoutAssumption(double AddedNoise, long Shots, double Confidence, string Method);

/// <summary>The lifetimes of one scenario (without sensitivities).</summary>
public sealed record LifetimeCore(
    string Mode,
    string Reference,
    double OriginS,
    double ScenarioEndDelayS,
    double ThresholdDb,
    double ThresholdVariance,
    double InitialVarMin,
    double? PhysicalLifetimeS,
    LifetimeStatus PhysicalStatus,
    bool PhysicalPastScenarioEnd,
    double? ApproximateLifetimeS,
    double DecayRate,
    double BathOccupancy,
    ReadoutAssumption? Readout,
    double? PowerAtStart,
    double? ObservableLifetimeS,
    LifetimeStatus ObservableStatus,
    ImmutableArray<string> Notes)
{
    /// <summary>Squeezing at the reference in dB.</summary>
    public double InitialSqueezingDb => Physics.SqueezingDb(InitialVarMin);

    /// <summary>Physical over approximate lifetime; null when either is not a positive finite number.</summary>
    public double? Ratio => PhysicalLifetimeS is > 0 && ApproximateLifetimeS is > 0 ? PhysicalLifetimeS / ApproximateLifetimeS : null;
}

/// <summary>
/// A lifetime analysis: the lifetimes, their sensitivities and the table against delay. Its warnings are the
/// lifetimes' notes (a delay past the scenario's end, a state not squeezed at the reference…).
/// </summary>
public sealed record LifetimeResult(
    Scenario Scenario,
    LifetimeSettings Settings,
    LifetimeCore Core,
    ImmutableArray<LifetimeSensitivity> Sensitivities,
    ImmutableArray<double> DelaysS,
    ImmutableArray<double> VarMin,
    ImmutableArray<double?> Power,
    Provenance Provenance,
    ResultStatus Status,
    WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ImmutableArray<string> Warnings => Core.Notes;

    /// <summary>Standard deviation of the physical lifetime (s) from the measured values' errors; null without them or when a change is undefined.</summary>
    public double? PhysicalLifetimeSd { get; init; }

    /// <summary>Standard deviation of the observable lifetime (s) from the measured values' errors.</summary>
    public double? ObservableLifetimeSd { get; init; }
}

/// <summary>
/// How long squeezing survives after the drives stop, physically and as a readout sees it.
/// <list type="bullet">
/// <item>Physical lifetime: the first delay after the reference at which the mode's var_min rises to the threshold
/// variance ½·10^(−dB/10), by root finding on the engine's exact propagation.</item>
/// <item>Approximate lifetime: the single-mode law V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½) solved for the threshold,
/// t* = (1/γ) ln[(n_th + ½ − V_min(0)) / (n_th + ½ − V_thr)] (for V_thr = ½ this is the textbook t*).</item>
/// <item>Power at a delay: the probability that N shots with added noise n_add put the exact one-sided χ² upper confidence
/// bound of the inferred variance (s² − n_add) below the threshold (<see cref="VarianceStatistics.ResolutionProbability"/>).</item>
/// <item>Observable lifetime: the first delay at which that power falls to ½. Power ½ is the median-measurement
/// criterion: the critical sample variance equals the median of s², so a typical run still resolves the squeezing
/// up to it and fails after it. It needs no second arbitrary level, and it tends to the physical lifetime as
/// n_add → 0 and N → ∞ (the bound then tends to the true variance).</item>
/// </list>
/// </summary>
public static class LifetimeAnalysis
{
    /// <summary>Power at which the observable lifetime is read (the median-measurement criterion).</summary>
    public const double ObservablePower = 0.5;

    /// <summary>Runs the analysis, with sensitivities unless the settings turn them off.</summary>
    /// <exception cref="InputException">A setting is out of range or names an unknown stage or mode.</exception>
    public static LifetimeResult Solve(Scenario scenario, LifetimeSettings settings)
    {
        settings.Validate(scenario);
        long started = System.Diagnostics.Stopwatch.GetTimestamp();
        var track = ReleaseTrack.Create(scenario, settings.AfterStage, settings.Mode);
        var core = Analyze(track, settings);
        var sensitivities = settings.Sensitivities ? Sensitivities(scenario, settings, core) : [];

        double end = new[] { core.PhysicalLifetimeS, core.ApproximateLifetimeS, core.ObservableLifetimeS }
            .Where(v => v is > 0 && double.IsFinite(v.Value)).Select(v => v!.Value).DefaultIfEmpty(0).Max();
        if (end <= 0) end = Math.Max(core.ScenarioEndDelayS, 1 / (track.DecayRate * (track.BathOccupancy + 1)));
        end *= 1.5;
        int n = settings.CurvePoints;
        var delays = ImmutableArray.CreateBuilder<double>(n);
        var varMin = ImmutableArray.CreateBuilder<double>(n);
        var power = ImmutableArray.CreateBuilder<double?>(n);
        double threshold = core.ThresholdVariance;
        for (int k = 0; k < n; k++)
        {
            double tau = end * k / (n - 1);
            double v = track.VarMin(tau);
            delays.Add(tau);
            varMin.Add(v);
            power.Add(core.Readout is { } r ? VarianceStatistics.ResolutionProbability(v, r.AddedNoise, r.Shots, threshold, r.Confidence) : null);
        }
        var measured = settings.Measured;
        // One +1σ row per measured value with an error (see Sensitivities); a value without an error contributes nothing.
        var perSd = measured.Values.Select(v => sensitivities.LastOrDefault(x => x.Parameter == v.Path && x.Change == MeasuredChange)).ToArray();
        bool propagate = !measured.Values.IsEmpty && settings.Sensitivities;
        return new LifetimeResult(scenario, settings, core, sensitivities, delays.MoveToImmutable(), varMin.MoveToImmutable(), power.MoveToImmutable(),
            Provenance.For(scenario), ResultStatuses.From(core.Notes), WorkStatistics.Since(started))
        {
            PhysicalLifetimeSd = propagate ? measured.Propagate([.. perSd.Select(x => x is null ? 0 : x.PhysicalChangeS)]) : null,
            ObservableLifetimeSd = propagate && core.Readout is not null ? measured.Propagate([.. perSd.Select(x => x is null ? 0 : x.ObservableChangeS)]) : null,
        };
    }

    /// <summary>The lifetimes of a scenario, without sensitivities.</summary>
    public static LifetimeCore Analyze(Scenario scenario, LifetimeSettings settings)
    {
        settings.Validate(scenario);
        return Analyze(ReleaseTrack.Create(scenario, settings.AfterStage, settings.Mode), settings);
    }

    private static LifetimeCore Analyze(ReleaseTrack track, LifetimeSettings settings)
    {
        var s = track.Scenario;
        var notes = ImmutableArray.CreateBuilder<string>();
        double threshold = LifetimeSettings.ThresholdVariance(settings.ThresholdDb);
        double v0 = track.VarMin(0);
        double gamma = track.DecayRate, nth = track.BathOccupancy;

        // Single-mode law solved for V(t*) = V_thr (damping only; exact for an isolated undriven mode).
        double? approximate;
        if (v0 >= threshold) approximate = 0;
        else if (nth + 0.5 <= threshold) approximate = null;
        else approximate = Math.Log((nth + 0.5 - v0) / (nth + 0.5 - threshold)) / gamma;

        // Grid step: a small fraction of the expected lifetime, else of the thermal decoherence time.
        double scale = approximate is > 0 ? approximate.Value : 1 / (gamma * (nth + 1));
        double step = scale / 32;
        double uniformUntil = Math.Max(track.ScenarioEndDelayS, 0) + 4 * scale;
        double horizon = Math.Max(track.ScenarioEndDelayS, 0) + 200 / gamma + 100 * scale;

        double? physical;
        LifetimeStatus physicalStatus;
        if (v0 >= threshold)
        {
            physical = 0;
            physicalStatus = LifetimeStatus.NotSqueezedAtStart;
            notes.Add($"'{track.Mode}' is not squeezed below the threshold at the {track.Reference} (var_min = {v0:G6} ≥ {threshold:G6}); lifetime 0");
        }
        else
        {
            physical = Crossing.First(tau => track.VarMin(tau) - threshold, step, uniformUntil, horizon, settings.RelativeTolerance);
            physicalStatus = physical is null ? LifetimeStatus.BeyondHorizon : LifetimeStatus.Crossed;
            if (physical is null)
                notes.Add($"var_min stays below the threshold up to {horizon:G4} s after the reference" +
                          (track.ExtensionSteadyVarMin() is { } vs ? $" (the undriven steady var_min is {vs:G6})" : "") + "; no finite lifetime");
        }
        bool past = physical is { } p && track.PastScenarioEnd(p);
        if (past)
            notes.Add($"the physical lifetime runs past the end of the scenario ({track.ScenarioEndDelayS:G6} s after the reference); " +
                      $"the evolution was continued with the last stage's ('{s.Stages[^1].Name}') baths and detunings, tones off");

        ReadoutAssumption? readout = null;
        double? power0 = null, observable = null;
        LifetimeStatus observableStatus;
        if (s.Readout is not { } r)
        {
            observableStatus = LifetimeStatus.NoReadout;
            notes.Add("the scenario has no readout block; the observable lifetime needs a readout (its added noise and shots)");
        }
        else
        {
            if (r.Mode != track.Mode)
                notes.Add($"the readout measures '{r.Mode}', the lifetime follows '{track.Mode}'; the observable lifetime applies the readout's noise and shots to '{track.Mode}'");
            var chain = ReadoutChains.For(s);
            readout = new ReadoutAssumption(chain.AddedNoise, r.Shots, settings.Confidence, chain.Method);
            double Power(double v) => VarianceStatistics.ResolutionProbability(v, chain.AddedNoise, r.Shots, threshold, settings.Confidence);
            power0 = Power(v0);
            if (power0 < ObservablePower)
            {
                observableStatus = LifetimeStatus.NeverResolved;
                notes.Add($"the readout does not resolve the squeezing even at the reference (power {power0:G4} < {ObservablePower}); observable lifetime: never resolved");
            }
            else
            {
                // Power falls as var_min rises; the crossing lies before the physical one, so the same grid brackets it.
                observable = Crossing.First(tau => ObservablePower - Power(track.VarMin(tau)), step, uniformUntil, horizon, settings.RelativeTolerance);
                observableStatus = observable is null ? LifetimeStatus.BeyondHorizon : LifetimeStatus.Crossed;
            }
        }
        return new LifetimeCore(track.Mode, track.Reference, track.OriginS, track.ScenarioEndDelayS, settings.ThresholdDb, threshold, v0,
            physical, physicalStatus, past, approximate, gamma, nth, readout, power0, observable, observableStatus, notes.ToImmutable());
    }

    /// <summary>The change of a sensitivity row for a measured value: one standard error up.</summary>
    public const string MeasuredChange = "+1σ";

    /// <summary>
    /// One-sided finite differences on the exact model through <see cref="ParameterPath"/>: +1 mK of the mode's bath
    /// temperature, ×2 of its linewidth, +0.1 quanta of added noise, ×2 shots, and +1σ of each measured value.
    /// </summary>
    private static ImmutableArray<LifetimeSensitivity> Sensitivities(Scenario scenario, LifetimeSettings settings, LifetimeCore core)
    {
        var changes = new List<(string Path, string Change, Func<double, double> Apply, Scenario From)>
        {
            ($"modes.{core.Mode}.bath.temperature", "+1 mK", t => t + 1e-3, scenario),
            ($"modes.{core.Mode}.linewidth", "×2", g => 2 * g, scenario),
        };
        if (scenario.Readout is { } readout)
        {
            // A readout given by a chain or a pulse is replaced by its stated equivalent, so that the added noise itself can change.
            var stated = readout.AddedNoise is not null ? scenario : scenario with
            {
                Readout = readout with { Method = ReadoutMethod.Phenomenological, AddedNoise = ReadoutChains.For(scenario).AddedNoise, Chain = [] },
            };
            changes.Add(("readout.added_noise", "+0.1 quanta", n => n + 0.1, stated));
            changes.Add(("readout.shots", "×2", n => Math.Min(2 * n, int.MaxValue), scenario));
        }
        foreach (var v in settings.Measured.Values.Where(v => double.IsFinite(v.Sd) && v.Sd > 0))
            changes.Add((v.Path, MeasuredChange, x => x + v.Sd, scenario));
        var quiet = settings with { Sensitivities = false };
        var result = ImmutableArray.CreateBuilder<LifetimeSensitivity>();
        foreach (var (path, change, apply, from) in changes)
        {
            var p = ParameterPath.Parse(path, from);
            double value = p.Get(from), to = apply(value);
            var c = Analyze(p.Set(from, to), quiet);
            result.Add(new LifetimeSensitivity(path, change, value, to, c.PhysicalLifetimeS, c.ObservableLifetimeS,
                c.PhysicalLifetimeS - core.PhysicalLifetimeS, c.ObservableLifetimeS - core.ObservableLifetimeS));
        }
        return result.ToImmutable();
    }
}

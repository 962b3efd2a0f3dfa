using System.Collections.Immutable;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Tolerance;

/// <summary>Settings of a readout tolerance analysis: the grid, the delay and the statistics.</summary>
public sealed record ToleranceSettings
{
    /// <summary>Added noise values of the grid (quanta per quadrature, input-referred).</summary>
    public ImmutableArray<double> AddedNoise { get; init; } = [];

    /// <summary>Shot counts of the grid.</summary>
    public ImmutableArray<long> Shots { get; init; } = [];

    /// <summary>Delay after the reference at which the measurement is made (s).</summary>
    public double DelayS { get; init; }

    /// <summary>Stage whose end is the reference; null: the last driven stage.</summary>
    public string? AfterStage { get; init; }

    /// <summary>Mode measured; null: the readout mode, else the first mechanical mode.</summary>
    public string? Mode { get; init; }

    /// <summary>Target power for the tolerable added noise and the shots needed.</summary>
    public double TargetPower { get; init; } = 0.9;

    /// <summary>One-sided confidence of the upper bound.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Threshold in dB of squeezing (0 dB: zero-point).</summary>
    public double ThresholdDb { get; init; }

    /// <summary>σ of the calibration error of the added noise (quanta); null: no Monte Carlo.</summary>
    public double? CalibrationUncertainty { get; init; }

    /// <summary>Monte Carlo draws per grid point.</summary>
    public int Draws { get; init; } = 4000;

    /// <summary>Added noise values (quanta, no unit) in the grammar of <see cref="Ranges"/>, e.g. <c>0:3:+0.25</c>.</summary>
    /// <exception cref="InputException">Malformed; the message names the setting.</exception>
    public static ImmutableArray<double> ParseAddedNoise(string text) => Ranges.Parse(text, Plain, "added noise").Values;

    /// <summary>Shot counts in the grammar of <see cref="Ranges"/>, e.g. <c>500,2000,1e4</c>.</summary>
    /// <exception cref="InputException">A value is not a whole number ≥ 2; the message names the setting.</exception>
    public static ImmutableArray<long> ParseShots(string text) => Ranges.ParseCounts(text, "shots", 2, "are needed for a sample variance");

    private static double Plain(string text) =>
        double.TryParse(text, System.Globalization.NumberStyles.Float, System.Globalization.CultureInfo.InvariantCulture, out double v) && double.IsFinite(v)
            ? v : throw new InputException($"'{text}' is not a number");

    /// <summary>Checks the values, and with a scenario the reference stage; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range or the stage unknown.</exception>
    public void Validate(Scenario? scenario = null)
    {
        if (scenario is not null) LifetimeSettings.CheckReferenceStage(scenario, AfterStage);
        if (AddedNoise.IsDefaultOrEmpty) throw new InputException("added noise: at least one value is needed (e.g. 0:3:+0.25)");
        if (AddedNoise.Any(n => !double.IsFinite(n) || n < 0)) throw new InputException("added noise: values must be finite and >= 0 quanta");
        if (Shots.IsDefaultOrEmpty) throw new InputException("shots: at least one shot count is needed (e.g. 500,2000,10000)");
        if (Shots.Any(n => n < 2 || n > 1_000_000_000)) throw new InputException("shots: shot counts must be integers from 2 to 1e9");
        if (AddedNoise.Length * (long)Shots.Length > 1_000_000) throw new InputException("added noise × shots: the grid has more than 1e6 points");
        if (!double.IsFinite(DelayS) || DelayS < 0) throw new InputException($"delay: {DelayS} s is out of range; must be >= 0");
        if (!(TargetPower > 0 && TargetPower < 1)) throw new InputException($"target power: {TargetPower} is out of range; allowed 0 < P < 1 (e.g. 0.9)");
        if (!(Confidence > 0.5 && Confidence < 1)) throw new InputException($"confidence: {Confidence} is out of range; allowed 0.5 < C < 1 (e.g. 0.95)");
        if (!double.IsFinite(ThresholdDb) || ThresholdDb < -30 || ThresholdDb > 60)
            throw new InputException($"threshold: {ThresholdDb} dB is out of range; allowed -30 dB to 60 dB");
        if (CalibrationUncertainty is { } s && (!double.IsFinite(s) || s < 0))
            throw new InputException($"calibration uncertainty: {s} is out of range; must be >= 0 quanta");
        if (Draws < 100 || Draws > 10_000_000) throw new InputException($"draws: {Draws} is out of range; allowed 100 to 1e7");
    }
}

/// <summary>One grid point: closed-form power and, where it ran, the Monte Carlo power with calibration error.</summary>
public sealed record TolerancePoint(double AddedNoise, long Shots, double Power, double? PowerMc, double? PowerMcErr);

/// <summary>The scenario's own readout at the delay: its added noise and shots, and the closed-form power they give.</summary>
public sealed record ScenarioReadoutPower(IReadoutChain Chain, long Shots, double Power);

/// <summary>The result of a tolerance analysis; its warnings are the notes (a delay past the scenario's end, no squeezing to resolve…).</summary>
public sealed record ToleranceResult(
    Scenario Scenario,
    ToleranceSettings Settings,
    string Mode,
    string Reference,
    double VarMin,
    double ThresholdVariance,
    bool PastScenarioEnd,
    ImmutableArray<TolerancePoint> Points,
    ImmutableArray<(long Shots, double? AddedNoise)> LargestAddedNoise,
    ImmutableArray<(double AddedNoise, long? Shots)> FewestShots,
    ScenarioReadoutPower? ScenarioReadout,
    ImmutableArray<string> Notes,
    Provenance Provenance,
    ResultStatus Status,
    WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ImmutableArray<string> Warnings => Notes;

    /// <summary>Squeezing at the delay in dB.</summary>
    public double SqueezingDb => Physics.SqueezingDb(VarMin);
}

/// <summary>
/// Can a readout resolve the squeezing at a delay? For each (added noise, shots) the closed-form power of
/// <see cref="ResolutionPower"/> at the exact var_min of the engine, optionally a Monte Carlo with calibration error,
/// and, at the target power, the largest tolerable added noise per shot count and the fewest shots per added noise.
/// </summary>
public static class ToleranceAnalysis
{
    /// <summary>Runs the analysis. Grid point k = i_noise·|shots| + i_shots draws from <see cref="ResolutionPower.PointRandom"/>(seed, k).</summary>
    /// <exception cref="InputException">A setting is out of range or names an unknown stage or mode.</exception>
    public static ToleranceResult Solve(Scenario scenario, ToleranceSettings settings, CancellationToken cancel = default)
    {
        settings.Validate(scenario);
        long started = System.Diagnostics.Stopwatch.GetTimestamp();
        var track = ReleaseTrack.Create(scenario, settings.AfterStage, settings.Mode);
        double v = track.VarMin(settings.DelayS);
        double threshold = LifetimeSettings.ThresholdVariance(settings.ThresholdDb);
        var notes = ImmutableArray.CreateBuilder<string>();
        bool past = track.PastScenarioEnd(settings.DelayS);
        if (past)
            notes.Add($"the delay runs past the end of the scenario ({track.ScenarioEndDelayS:G6} s after the reference); the evolution was continued with the last stage's baths, tones off");
        if (v >= threshold)
            notes.Add($"var_min = {v:G6} at the delay is not below the threshold {threshold:G6}: no readout can resolve squeezing there");

        var points = ImmutableArray.CreateBuilder<TolerancePoint>(settings.AddedNoise.Length * settings.Shots.Length);
        int k = 0;
        foreach (double n in settings.AddedNoise)
        {
            cancel.ThrowIfCancellationRequested();
            foreach (long shots in settings.Shots)
            {
                cancel.ThrowIfCancellationRequested();
                double power = ResolutionPower.ClosedForm(v, n, shots, threshold, settings.Confidence);
                double? mc = null, err = null;
                if (settings.CalibrationUncertainty is { } sigma)
                {
                    var (p, e) = ResolutionPower.MonteCarlo(v, n, shots, threshold, settings.Confidence, sigma, settings.Draws,
                        ResolutionPower.PointRandom(scenario.Seed, k), cancel);
                    (mc, err) = (p, e);
                }
                points.Add(new TolerancePoint(n, shots, power, mc, err));
                k++;
            }
        }
        var largest = settings.Shots.Select(s => (s, ResolutionPower.LargestAddedNoise(v, s, threshold, settings.Confidence, settings.TargetPower))).ToImmutableArray();
        var fewest = settings.AddedNoise.Select(n => (n, ResolutionPower.FewestShots(v, n, threshold, settings.Confidence, settings.TargetPower))).ToImmutableArray();
        if (settings.CalibrationUncertainty is not null)
            notes.Add("the largest added noise and fewest shots are from the closed form (added noise known exactly); power_mc includes the calibration error");
        ScenarioReadoutPower? own = null;
        if (scenario.Readout is { } readout)
        {
            var chain = ReadoutChains.For(scenario);
            own = new ScenarioReadoutPower(chain, readout.Shots, ResolutionPower.ClosedForm(v, chain.AddedNoise, readout.Shots, threshold, settings.Confidence));
        }
        return new ToleranceResult(scenario, settings, track.Mode, track.Reference, v, threshold, past, points.MoveToImmutable(),
            largest, fewest, own, notes.ToImmutable(), Provenance.For(scenario), ResultStatuses.From(notes), WorkStatistics.Since(started, k));
    }
}

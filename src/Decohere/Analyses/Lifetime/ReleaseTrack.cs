using Decohere.Core;
using Decohere.Engine;
using Decohere.Scenarios;

namespace Decohere.Analyses.Lifetime;

/// <summary>
/// The exact evolution of one mode after a reference time (the end of the last driven stage, or of a named stage):
/// the engine's own <see cref="Dynamics.Propagate"/> from the state at the stage boundaries, continued past the
/// end of the scenario with the last stage's model with its tones switched off. Delays count from the reference.
/// </summary>
public sealed class ReleaseTrack
{
    /// <summary>Name of the stage appended to model the time after the end of the scenario.</summary>
    public const string ExtensionStageName = "(after the last stage, undriven)";

    private readonly int _firstStage;

    private ReleaseTrack(Scenario scenario, Dynamics dynamics, string mode, int referenceStage, string reference)
    {
        Scenario = scenario;
        Dynamics = dynamics;
        Mode = mode;
        ModeIndex = dynamics.ModeNames.IndexOf(mode);
        ReferenceStage = referenceStage;
        Reference = reference;
        _firstStage = referenceStage + 1;
        OriginS = referenceStage < 0 ? 0 : scenario.StageStarts[referenceStage] + scenario.Stages[referenceStage].DurationS;
        ScenarioEndDelayS = scenario.TotalDurationS - OriginS;
        var release = dynamics.Scenario.Stages[_firstStage];
        var m = scenario.ModeNamed(mode);
        DecayRate = m.DecayRate;
        BathOccupancy = dynamics.Scenario.BathOf(m, release).Occupancy;
        ReleaseStage = release.Name;
    }

    /// <summary>The scenario as given.</summary>
    public Scenario Scenario { get; }

    /// <summary>The engine's solution of the scenario with the undriven extension stage appended.</summary>
    public Dynamics Dynamics { get; }

    /// <summary>The mode followed.</summary>
    public string Mode { get; }

    /// <summary>Position of the mode in the state vector.</summary>
    public int ModeIndex { get; }

    /// <summary>Index of the stage whose end is the reference; −1 when the reference is the start of the scenario.</summary>
    public int ReferenceStage { get; }

    /// <summary>The reference in words, e.g. "end of stage 'squeeze' (the last driven stage)".</summary>
    public string Reference { get; }

    /// <summary>Time of the reference from the start of the first stage (s).</summary>
    public double OriginS { get; }

    /// <summary>Delay at which the scenario's last stage ends (s); later delays use the undriven extension.</summary>
    public double ScenarioEndDelayS { get; }

    /// <summary>The stage running right after the reference (its name; the extension's when the reference is the end).</summary>
    public string ReleaseStage { get; }

    /// <summary>Energy decay rate γ of the mode (s⁻¹, angular).</summary>
    public double DecayRate { get; }

    /// <summary>Bath occupancy of the mode in the stage right after the reference.</summary>
    public double BathOccupancy { get; }

    /// <summary>
    /// Builds the track. <paramref name="afterStage"/> null: the reference is the end of the last stage with tones
    /// (the start of the scenario when no stage is driven). <paramref name="mode"/> null: the readout mode, else the
    /// first mechanical mode.
    /// </summary>
    /// <exception cref="InputException">Unknown stage or mode; the message lists the valid ones.</exception>
    public static ReleaseTrack Create(Scenario scenario, string? afterStage = null, string? mode = null)
    {
        int reference;
        string description;
        if (afterStage is not null)
        {
            reference = scenario.Stages.Select((s, i) => (s, i)).FirstOrDefault(p => p.s.Name == afterStage, (null!, -1)).i;
            if (reference < 0)
                throw new InputException($"--after: unknown stage '{afterStage}'; stages: {string.Join(", ", scenario.Stages.Select(s => s.Name))}");
            description = $"end of stage '{afterStage}'";
        }
        else
        {
            reference = -1;
            for (int i = scenario.Stages.Length - 1; i >= 0; i--)
                if (scenario.Stages[i].Tones.Length > 0) { reference = i; break; }
            description = reference < 0
                ? "start of the scenario (no stage is driven)"
                : $"end of stage '{scenario.Stages[reference].Name}' (the last driven stage)";
        }

        string name = mode ?? scenario.Readout?.Mode
            ?? scenario.Modes.FirstOrDefault(m => m.Kind == ModeKind.Mechanical)?.Name
            ?? throw new InputException("the scenario has no readout and no mechanical mode; nothing to follow");
        var last = scenario.Stages[^1];
        // Past its end the scenario is continued with its last stage's baths and detunings but no tones: the drives are off.
        var extended = scenario with { Stages = scenario.Stages.Add(last with { Name = ExtensionStageName, Tones = [] }) };
        var dynamics = Dynamics.Solve(extended);
        if (!dynamics.ModeNames.Contains(name))
            throw new InputException($"mode '{name}' is not in the state of this model; modes: {string.Join(", ", dynamics.ModeNames)}");
        return new ReleaseTrack(scenario, dynamics, name, reference, description);
    }

    /// <summary>The exact state at <paramref name="delay"/> seconds after the reference (one Van Loan step from the last stage boundary).</summary>
    public GaussianState StateAt(double delay)
    {
        if (!(delay >= 0)) throw new ArgumentOutOfRangeException(nameof(delay), delay, "delay must be >= 0");
        var starts = Dynamics.StageStarts;
        int extension = starts.Length - 1;
        int i = _firstStage;
        double t = OriginS + delay;
        while (i < extension && t > starts[i] + Dynamics.Scenario.Stages[i].DurationS) i++;
        double dt = i == _firstStage ? delay - (starts[i] - OriginS) : t - starts[i];
        return dt <= 0 ? Dynamics.Boundaries[i] : Dynamics.Propagate(Dynamics.Boundaries[i], i, dt);
    }

    /// <summary>The mode's minimum quadrature variance at a delay (quanta; zero-point ½).</summary>
    public double VarMin(double delay) => StateAt(delay).Moments(ModeIndex).VarMin;

    /// <summary>True when the delay lies past the end of the scenario's last stage.</summary>
    public bool PastScenarioEnd(double delay) => delay > ScenarioEndDelayS * (1 + 1e-12);

    /// <summary>Steady minimum variance of the undriven extension, when it is stable.</summary>
    public double? ExtensionSteadyVarMin()
    {
        int extension = Dynamics.StageStarts.Length - 1;
        return Dynamics.HasSteadyState(extension) ? Dynamics.SteadyState(extension).Moments(ModeIndex).VarMin : null;
    }
}

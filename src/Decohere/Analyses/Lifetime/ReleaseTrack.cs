using Decohere.Core;
using Decohere.Engine;
using Decohere.Scenarios;

namespace Decohere.Analyses.Lifetime;

/// <summary>
/// One mode seen from a reference time (the end of the last driven stage, or of a named stage): a view of the engine's
/// dynamics solved with <see cref="Dynamics.ContinuesPastEnd"/>, so delays past the end of the scenario continue with the
/// last stage's model with its tones switched off. Delays count from the reference.
/// </summary>
public sealed class ReleaseTrack
{
    private ReleaseTrack(Dynamics dynamics, string mode, int referenceStage, string reference)
    {
        var scenario = dynamics.Scenario;
        Dynamics = dynamics;
        Mode = mode;
        ModeIndex = dynamics.ModeNames.IndexOf(mode);
        ReferenceStage = referenceStage;
        Reference = reference;
        OriginS = referenceStage < 0 ? 0 : dynamics.StageEnd(referenceStage);
        ScenarioEndDelayS = dynamics.EndS - OriginS;
        var release = dynamics.Stages[referenceStage + 1];
        var m = scenario.ModeNamed(mode);
        DecayRate = m.DecayRate;
        BathOccupancy = scenario.BathOf(m, release).Occupancy;
        ReleaseStage = release.Name;
    }

    /// <summary>The scenario as given.</summary>
    public Scenario Scenario => Dynamics.Scenario;

    /// <summary>The engine's solution of the scenario, continued past its end with the drives off.</summary>
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
                throw new InputException($"reference stage: unknown stage '{afterStage}'; stages: {string.Join(", ", scenario.Stages.Select(s => s.Name))}");
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
        var dynamics = Dynamics.Solve(scenario, continuePastEnd: true);
        if (!dynamics.ModeNames.Contains(name))
            throw new InputException($"mode '{name}' is not in the state of this model; modes: {string.Join(", ", dynamics.ModeNames)}");
        return new ReleaseTrack(dynamics, name, reference, description);
    }

    /// <summary>The exact state at <paramref name="delay"/> seconds after the reference.</summary>
    public GaussianState StateAt(double delay)
    {
        if (!(delay >= 0)) throw new ArgumentOutOfRangeException(nameof(delay), delay, "delay must be >= 0");
        return Dynamics.StateAt(OriginS + delay);
    }

    /// <summary>The mode's minimum quadrature variance at a delay (quanta; zero-point ½).</summary>
    public double VarMin(double delay) => StateAt(delay).Moments(ModeIndex).VarMin;

    /// <summary>True when the delay lies past the end of the scenario's last stage.</summary>
    public bool PastScenarioEnd(double delay) => Dynamics.IsPastEnd(OriginS + delay);

    /// <summary>Steady minimum variance of the undriven extension, when it is stable.</summary>
    public double? ExtensionSteadyVarMin()
    {
        int extension = Dynamics.Stages.Length - 1;
        return Dynamics.HasSteadyState(extension) ? Dynamics.SteadyState(extension).Moments(ModeIndex).VarMin : null;
    }
}

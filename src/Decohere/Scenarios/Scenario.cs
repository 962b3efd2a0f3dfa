using System.Collections.Immutable;
using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>Whether a mode is a mechanical resonator or an electromagnetic cavity.</summary>
public enum ModeKind { Mechanical, Cavity }

/// <summary>Full: cavities kept as modes. Effective: cavities adiabatically eliminated.</summary>
public enum ModelKind { Full, Effective }

/// <summary>Which motional sideband of the cavity a drive tone sits on.</summary>
public enum Sideband { Red, Blue }

/// <summary>A static bilinear coupling between two modes.</summary>
public enum CouplingKind { BeamSplitter, TwoModeSqueezing }

/// <summary>A thermal bath, by its occupancy (quanta); the temperature is kept when the file gave one.</summary>
public sealed record Bath(double Occupancy, double? TemperatureK = null)
{
    /// <summary>A cavity bath that grows with the drive: n_c = occupancy + law(C), C the summed cooperativity of the tones on the cavity.</summary>
    public HeatingLaw? Heating { get; init; }

    /// <summary>Transient excess occupancy: n(t) = occupancy + Excess·e^{−(t − t_s)/RelaxTimeS} from the start t_s of <see cref="FromStage"/>.</summary>
    public double Excess { get; init; }

    /// <summary>Relaxation time τ of the excess (s); 0 when there is none.</summary>
    public double RelaxTimeS { get; init; }

    /// <summary>The stage whose start the excess relaxes from; null: the first stage (or, for a stage's bath override, that stage).</summary>
    public string? FromStage { get; init; }

    /// <summary>True when the bath relaxes in time.</summary>
    public bool IsTransient => Excess != 0 && RelaxTimeS > 0;
}

/// <summary>
/// Drive-induced heating of a cavity's bath: extra occupancy Coefficient·C^Exponent at cooperativity C, or, when
/// <see cref="Table"/> is given, its value interpolated linearly in C (held at the end values outside the table).
/// </summary>
public sealed record HeatingLaw(double Coefficient, double Exponent, ImmutableArray<(double Cooperativity, double Excess)> Table = default)
{
    /// <summary>The extra occupancy at cooperativity C ≥ 0.</summary>
    public double ExcessAt(double cooperativity)
    {
        if (Table.IsDefaultOrEmpty) return cooperativity > 0 ? Coefficient * Math.Pow(cooperativity, Exponent) : 0;
        if (cooperativity <= Table[0].Cooperativity) return Table[0].Excess;
        for (int k = 1; k < Table.Length; k++)
            if (cooperativity <= Table[k].Cooperativity)
            {
                var (c0, n0) = Table[k - 1];
                var (c1, n1) = Table[k];
                return n0 + (n1 - n0) * (cooperativity - c0) / (c1 - c0);
            }
        return Table[^1].Excess;
    }
}

/// <summary>One bosonic mode. Frequencies and linewidths are ordinary frequencies (Hz).</summary>
public sealed record Mode(string Name, ModeKind Kind, double FrequencyHz, double LinewidthHz, Bath Bath)
{
    /// <summary>Energy decay rate γ or κ in s⁻¹ (2π × linewidth).</summary>
    public double DecayRate => Physics.Angular(LinewidthHz);

    /// <summary>Angular frequency ω in s⁻¹.</summary>
    public double AngularFrequency => Physics.Angular(FrequencyHz);

    /// <summary>Quality factor f / linewidth.</summary>
    public double QualityFactor => FrequencyHz / LinewidthHz;
}

/// <summary>A static coupling between two modes at a rate given in Hz (G = 2π × rate).</summary>
public sealed record StaticCoupling(string ModeA, string ModeB, CouplingKind Kind, double RateHz);

/// <summary>How a tone's coupling was written in the file; the engine always uses <see cref="Tone.CouplingHz"/>.</summary>
public enum CouplingForm { Direct, SinglePhoton, Cooperativity }

/// <summary>A drive tone on a motional sideband: linearised coupling G = 2π × CouplingHz between a cavity and a mechanical mode.</summary>
public sealed record Tone(string Cavity, string Mechanical, Sideband Sideband, double CouplingHz, CouplingForm Form = CouplingForm.Direct);

/// <summary>An interval during which the tones, baths and detunings are constant.</summary>
public sealed record Stage(
    string Name,
    double DurationS,
    ImmutableArray<Tone> Tones,
    ImmutableDictionary<string, Bath> BathOverrides,
    ImmutableDictionary<string, double> DetuningsHz);

/// <summary>The state a mode starts in.</summary>
public abstract record InitialState
{
    /// <summary>Vacuum.</summary>
    public sealed record Ground : InitialState;
    /// <summary>Thermal state of the given occupancy.</summary>
    public sealed record Thermal(double Occupancy) : InitialState;
    /// <summary>Pure squeezed vacuum, squeezed quadrature at <paramref name="AngleRad"/> from x towards p.</summary>
    public sealed record Squeezed(double SqueezingDb, double AngleRad) : InitialState;
    /// <summary>Coherent state with mean quadratures (x, p), vacuum noise.</summary>
    public sealed record Coherent(double X, double P) : InitialState;
    /// <summary>The steady state of the first stage.</summary>
    public sealed record Steady : InitialState;
}

/// <summary>How the readout is modelled: added Gaussian noise, or a blue-sideband amplification pulse before the chain.</summary>
public enum ReadoutMethod { Phenomenological, Amplification }

/// <summary>One element of the measurement chain after the read cavity's output, in signal order.</summary>
public abstract record ChainElement
{
    /// <summary>A transmission η (line loss, collection, κ_ext/κ): the rest of the signal is replaced by vacuum.</summary>
    public sealed record Loss(double Efficiency) : ChainElement;

    /// <summary>
    /// A phase-insensitive amplifier of power gain <paramref name="GainDb"/> adding <paramref name="Noise"/> quanta per
    /// quadrature referred to its input. When the file gave a noise temperature, it is kept with the frequency it was
    /// converted at.
    /// </summary>
    public sealed record Amplifier(double GainDb, double Noise, double? NoiseTemperatureK = null, double? FrequencyHz = null) : ChainElement;
}

/// <summary>
/// The measurement: which mode, how it is read (<see cref="Method"/>), shots and delays. A phenomenological readout gives
/// <see cref="AddedNoise"/> (input-referred quanta per quadrature) or a <see cref="Chain"/>, never both; an amplification
/// readout gives its pulse (<see cref="AmplificationCouplingHz"/>, <see cref="AmplificationDurationS"/>) and the chain
/// after it. The loader enforces these combinations.
/// </summary>
public sealed record Readout(
    string Mode,
    double? AddedNoise,
    int Shots,
    string Stage,
    ImmutableArray<double> DelaysS,
    ReadoutMethod Method = ReadoutMethod.Phenomenological,
    double AmplificationCouplingHz = 0,
    double AmplificationDurationS = 0,
    ImmutableArray<ChainElement> Chain = default)
{
    /// <summary>The chain elements (empty when none were given).</summary>
    public ImmutableArray<ChainElement> Elements => Chain.IsDefault ? [] : Chain;
}

/// <summary>Shot-to-shot spread (Gaussian σ) of device parameters; empty means a pure Gaussian ensemble.</summary>
public sealed record Jitter(
    ImmutableDictionary<string, double> FrequencyHz,
    double CouplingRelative,
    ImmutableDictionary<string, double> Occupancy)
{
    /// <summary>No jitter.</summary>
    public static Jitter None { get; } = new(ImmutableDictionary<string, double>.Empty, 0, ImmutableDictionary<string, double>.Empty);

    /// <summary>True when every spread is zero.</summary>
    public bool IsNone => CouplingRelative == 0 && FrequencyHz.Values.All(v => v == 0) && Occupancy.Values.All(v => v == 0);
}

/// <summary>
/// A validated, immutable scenario: the problem the engines solve. Modes keep the order of the file,
/// which fixes the order of the state vector R = (x₁, p₁, …, xₙ, pₙ).
/// Make modified copies with <c>scenario with { … }</c>; never mutate. A lattice scenario keeps its geometry in
/// <see cref="Lattice"/> beside the modes and couplings it expanded to.
/// </summary>
public sealed record Scenario(
    string Name,
    ModelKind Model,
    bool SidebandCorrections,
    ImmutableArray<Mode> Modes,
    ImmutableArray<StaticCoupling> Couplings,
    ImmutableDictionary<string, InitialState> Initial,
    ImmutableArray<Stage> Stages,
    Readout? Readout,
    Jitter Jitter,
    double OutputStepS,
    long Seed,
    string SourceText,
    string SourceHash,
    Lattice? Lattice = null)
{
    /// <summary>The mode of the given name; the scenario is validated, so an unknown name is a programming error.</summary>
    public Mode ModeNamed(string name) => Modes.First(m => m.Name == name);

    /// <summary>Index of the stage of the given name.</summary>
    public int StageIndex(string name) => Stages.Select((s, i) => (s, i)).First(p => p.s.Name == name).i;

    /// <summary>Start time of each stage (s), from t = 0 at the start of the first.</summary>
    public ImmutableArray<double> StageStarts
    {
        get
        {
            var starts = ImmutableArray.CreateBuilder<double>(Stages.Length);
            double t = 0;
            foreach (var stage in Stages) { starts.Add(t); t += stage.DurationS; }
            return starts.MoveToImmutable();
        }
    }

    /// <summary>Total duration of all stages (s).</summary>
    public double TotalDurationS => Stages.Sum(s => s.DurationS);

    /// <summary>The bath a mode sees during a stage (the stage's override, else the mode's own).</summary>
    public Bath BathOf(Mode mode, Stage stage) => stage.BathOverrides.TryGetValue(mode.Name, out var b) ? b : mode.Bath;
}

using System.Collections.Immutable;

namespace Decohere.Statistics;

/// <summary>A measured collective-mode frequency (offset from the bare cavity frequency) with its standard error, Hz.</summary>
public sealed record MeasuredMode(int ModeIndex, double FrequencyHz, double ErrorHz);

/// <summary>
/// A measured participation |ψ_k(j)|² of site j in collective mode k with its standard error, or, when
/// <paramref name="Squared"/>, its square |ψ_k(j)|⁴: the drum's optomechanical damping divided by the single-mode rate,
/// which is what a damping measurement has Gaussian errors in (it may come out negative near a node).
/// </summary>
public sealed record MeasuredParticipation(int ModeIndex, int Site, double Value, double Error, bool Squared = false);

/// <summary>Measured eigenfrequencies and participations.</summary>
public sealed record SpectroscopyData(ImmutableArray<MeasuredMode> Modes, ImmutableArray<MeasuredParticipation> Participations);

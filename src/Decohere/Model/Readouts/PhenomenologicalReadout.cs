using System.Collections.Immutable;
using System.Globalization;
using Decohere.Scenarios;

namespace Decohere.Model.Readouts;

/// <summary>
/// Each measured quadrature is the true one plus independent Gaussian noise: the stated <c>readout.added_noise</c>, or the
/// Friis value of the chain that follows the cavity output (C. M. Caves, Phys. Rev. D 26, 1817 (1982)).
/// </summary>
public sealed record PhenomenologicalReadout(string Mode, int ModeIndex, double AddedNoise, double Gain,
    ImmutableArray<NoiseContribution> Contributions, ImmutableArray<string> Parameters) : IReadoutChain
{
    /// <inheritdoc/>
    public string Method => "phenomenological";

    /// <summary>The readout of a scenario whose method is phenomenological.</summary>
    public static PhenomenologicalReadout Of(Readout readout, int modeIndex)
    {
        if (readout.AddedNoise is { } n)
            return new(readout.Mode, modeIndex, n, 1,
                [new NoiseContribution("readout.added_noise", string.Create(CultureInfo.InvariantCulture, $"added noise {n:G4} quanta (stated)"), 1, n, n)],
                ["readout.added_noise"]);
        var (contributions, gain) = FriisCascade.Refer(readout.Elements);
        return new(readout.Mode, modeIndex, contributions.Sum(c => c.InputReferred), gain, contributions, [.. FriisCascade.Parameters(readout.Elements)]);
    }
}

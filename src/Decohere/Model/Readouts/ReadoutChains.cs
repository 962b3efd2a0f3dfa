using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Model.Readouts;

/// <summary>The one place that turns a scenario's readout block into its <see cref="IReadoutChain"/>.</summary>
public static class ReadoutChains
{
    /// <summary>The readout model of a scenario with a readout block.</summary>
    /// <exception cref="InputException">No readout block; the measured mode is not in the state vector; the pulse cannot be built.</exception>
    public static IReadoutChain For(Scenario scenario)
    {
        var readout = scenario.Readout ?? throw new InputException("readout: the scenario has no readout block; add one (mode, added_noise or chain, shots, stage, delays)");
        int index = ModelBuilder.StateModes(scenario).Select(m => m.Name).ToList().IndexOf(readout.Mode);
        if (index < 0)
            throw new InputException($"readout.mode: '{readout.Mode}' is not in the state vector of the {scenario.Model.ToString().ToLowerInvariant()} model (cavities are eliminated in model: effective); read out a mechanical mode");
        return readout.Method switch
        {
            ReadoutMethod.Phenomenological => PhenomenologicalReadout.Of(readout, index),
            ReadoutMethod.Amplification => AmplificationReadout.Of(scenario, index),
            _ => throw new ArgumentOutOfRangeException(nameof(scenario), readout.Method, "unknown readout method"),
        };
    }
}

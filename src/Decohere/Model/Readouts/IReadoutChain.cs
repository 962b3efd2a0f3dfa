using System.Collections.Immutable;

namespace Decohere.Model.Readouts;

/// <summary>
/// How a scenario's readout turns the measured mode's quadratures into recorded (i, q): every command asks this one model
/// for the input-referred added noise, so a run, a lifetime plan, a tolerance table, a sweep and a fit agree. Numbers are
/// referred to the measured mode (quanta per quadrature, the same units as its covariance; zero-point ½).
/// </summary>
public interface IReadoutChain
{
    /// <summary>Name of the measured mode.</summary>
    string Mode { get; }

    /// <summary>Position of the measured mode in the state vector.</summary>
    int ModeIndex { get; }

    /// <summary>The method in the scenario's words: "phenomenological" or "amplification".</summary>
    string Method { get; }

    /// <summary>Added noise per quadrature referred to the measured mode (quanta); the sum of <see cref="Contributions"/>.</summary>
    double AddedNoise { get; }

    /// <summary>Power gain from the mode's quadrature variance to the end of the chain (1 when nothing amplifies).</summary>
    double Gain { get; }

    /// <summary>Each element's share of <see cref="AddedNoise"/>, in signal order.</summary>
    ImmutableArray<NoiseContribution> Contributions { get; }

    /// <summary>Parameter paths of this readout that a fit may free or a sweep vary.</summary>
    ImmutableArray<string> Parameters { get; }
}

/// <summary>
/// One element's noise: where it is in the scenario (<c>readout.chain[1]</c>), the element in words, its power gain, the
/// noise it adds referred to its own input, and that noise referred to the measured mode (divided by every gain before it).
/// </summary>
public sealed record NoiseContribution(string Element, string Description, double Gain, double Noise, double InputReferred);

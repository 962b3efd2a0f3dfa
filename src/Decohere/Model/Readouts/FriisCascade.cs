using System.Collections.Immutable;
using System.Globalization;
using Decohere.Scenarios;

namespace Decohere.Model.Readouts;

/// <summary>
/// The noise of a cascade referred to its input: stage k's own input-referred noise divided by the product of the gains
/// before it (H. T. Friis, Proc. IRE 32, 419 (1944)), in quanta per quadrature.
/// </summary>
public static class FriisCascade
{
    /// <summary>
    /// Power gain and input-referred noise of one chain element. A transmission η passes η of the signal and replaces the
    /// rest by vacuum (½), V_out = η·V_in + (1 − η)/2, so it adds (1 − η)/(2η) referred to its input (C. M. Caves,
    /// Phys. Rev. D 26, 1817 (1982)); an amplifier adds its stated noise.
    /// </summary>
    public static (double Gain, double Noise) Of(ChainElement element) => element switch
    {
        ChainElement.Loss l => (l.Efficiency, (1 - l.Efficiency) / (2 * l.Efficiency)),
        ChainElement.Amplifier a => (Math.Pow(10, a.GainDb / 10), a.Noise),
        _ => throw new ArgumentOutOfRangeException(nameof(element), element, "unknown chain element"),
    };

    /// <summary>The element in words, for tables and summaries.</summary>
    public static string Describe(ChainElement element) => element switch
    {
        ChainElement.Loss l => string.Create(CultureInfo.InvariantCulture, $"loss, transmission η = {l.Efficiency:G4}"),
        ChainElement.Amplifier { NoiseTemperatureK: { } t, FrequencyHz: { } f } a => string.Create(CultureInfo.InvariantCulture,
            $"amplifier {a.GainDb:G4} dB, noise temperature {t:G4} K ({a.Noise:G4} quanta at {f / 1e9:G5} GHz)"),
        ChainElement.Amplifier a => string.Create(CultureInfo.InvariantCulture, $"amplifier {a.GainDb:G4} dB, {a.Noise:G4} quanta"),
        _ => element.ToString(),
    };

    /// <summary>
    /// Refers the scenario's chain to the measured mode when the chain's input already sits behind a gain
    /// <paramref name="precedingGain"/> (an amplification pulse), returning each element's contribution and the gain
    /// of the whole chain.
    /// </summary>
    public static (ImmutableArray<NoiseContribution> Contributions, double Gain) Refer(ImmutableArray<ChainElement> chain, double precedingGain = 1)
    {
        var result = ImmutableArray.CreateBuilder<NoiseContribution>(chain.Length);
        double before = precedingGain;
        for (int k = 0; k < chain.Length; k++)
        {
            var (gain, noise) = Of(chain[k]);
            result.Add(new NoiseContribution($"readout.chain[{k}]", Describe(chain[k]), gain, noise, noise / before));
            before *= gain;
        }
        return (result.MoveToImmutable(), before / precedingGain);
    }

    /// <summary>Parameter paths of the chain's elements.</summary>
    public static IEnumerable<string> Parameters(ImmutableArray<ChainElement> chain) => chain.SelectMany((e, k) => e switch
    {
        ChainElement.Loss => new[] { $"readout.chain[{k}].efficiency" },
        ChainElement.Amplifier { NoiseTemperatureK: not null } => [$"readout.chain[{k}].gain", $"readout.chain[{k}].noise_temperature"],
        _ => [$"readout.chain[{k}].gain", $"readout.chain[{k}].noise"],
    });
}

using System.Collections.Immutable;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting;

/// <summary>
/// A readout calibration from <c>fit-noise</c>: gain (measured variance units per quantum) and input-referred added noise
/// (quanta), each with its standard error. A fit with it converts measured variances to quanta (÷ gain, means ÷ √gain),
/// takes the added noise as a Gaussian prior on <c>readout.added_noise</c>, and carries the gain's uncertainty into every
/// parameter by the delta method (JCGM 100:2008, Guide to the Expression of Uncertainty in Measurement, sec. 5.1): refits
/// at gain ± its standard error give ∂x/∂gain·σ_gain, added in quadrature to the standard error and to each interval's
/// half width.
/// </summary>
public sealed record FitCalibration(string Source, double Gain, double GainSd, double AddedNoise, double AddedNoiseSd)
{
    /// <summary>The calibrated input-referred added noise as the measured value of <c>readout.added_noise</c>, for planning.</summary>
    public MeasuredValues AddedNoiseValue() => MeasuredValues.From([new MeasuredValue("readout.added_noise", AddedNoise, AddedNoiseSd, Source)]);

    /// <summary>The data in quanta for a gain <paramref name="gain"/>.</summary>
    public static FitData ToQuanta(FitData data, double gain)
    {
        double root = Math.Sqrt(gain);
        return data with
        {
            Delays = [.. data.Delays.Select(d => d with
            {
                VarI = d.VarI / gain, VarQ = d.VarQ / gain, CovIQ = d.CovIQ / gain, MeanI = d.MeanI / root, MeanQ = d.MeanQ / root,
            })],
        };
    }
}

using Decohere.Core;
using Decohere.Engine;
using Decohere.Model.Readouts;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Analyses.Fitting;

/// <summary>
/// What the readout sees at one delay under the model: the 2×2 covariance of (i, q) — the readout mode's (x, p) block
/// plus the added noise n_add on the diagonal — its mean, and the mode's own occupancy (without the added noise).
/// </summary>
public readonly record struct ReadoutPrediction(double VarI, double VarQ, double CovIQ, double MeanI, double MeanQ, double Occupancy);

/// <summary>
/// The engine as the fit's model: free parameters are set through <see cref="ParameterPath"/>, the scenario is solved
/// with <see cref="Dynamics.Solve"/>, and the states at the delays come from <see cref="Dynamics.Walk"/> (exact Van Loan
/// steps, C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978), one per distinct gap, so evenly spaced delays cost
/// one matrix exponential).
/// </summary>
public sealed class ReadoutModel
{
    private readonly Scenario _scenario;
    private readonly Readout _readout;

    /// <summary>Builds the model of <paramref name="scenario"/>'s readout with the given free parameters.</summary>
    /// <exception cref="InputException">The scenario has no readout, or its readout mode is not in the state.</exception>
    public ReadoutModel(Scenario scenario, IReadOnlyList<ParameterPath> free)
    {
        _scenario = scenario;
        _readout = scenario.Readout ?? throw new InputException($"scenario '{scenario.Name}' has no readout block: a fit needs readout.mode and readout.stage");
        // Builds the readout once up front so that a readout the model cannot express is refused before the fit starts.
        ReadoutChains.For(scenario);
        Free = free;
    }

    /// <summary>The free parameters, in order.</summary>
    public IReadOnlyList<ParameterPath> Free { get; }

    /// <summary>The scenario with the free parameters set to <paramref name="values"/> (SI units), a modified copy.</summary>
    public Scenario Apply(IReadOnlyList<double> values)
    {
        var s = _scenario;
        for (int k = 0; k < Free.Count; k++) s = Free[k].Set(s, values[k]);
        return s;
    }

    /// <summary>Predictions at the given delays (s from the readout stage's start), in the order given.</summary>
    public ReadoutPrediction[] Predict(IReadOnlyList<double> values, IReadOnlyList<double> delays, CancellationToken cancel = default) =>
        Predict(Apply(values), delays, cancel);

    /// <summary>Predictions of an already-modified scenario at the given delays.</summary>
    /// <remarks>Thousands of distinct delays cost a matrix exponential each: <paramref name="cancel"/> is checked at every delay.</remarks>
    public static ReadoutPrediction[] Predict(Scenario scenario, IReadOnlyList<double> delays, CancellationToken cancel = default)
    {
        var readout = scenario.Readout!;
        // The readout is part of the model: freed chain or pulse parameters change the added noise.
        double addedNoise = ReadoutChains.For(scenario).AddedNoise;
        var dynamics = Dynamics.Solve(scenario);
        int stage = scenario.StageIndex(readout.Stage);
        int mode = dynamics.ModeNames.IndexOf(readout.Mode);
        int n = 2 * dynamics.ModeNames.Length;
        double start = dynamics.StageStarts[stage];
        var times = delays.Select(d => start + d).ToArray();
        // The scenario must cover the data: past its end there is no model of the drives.
        for (int k = 0; k < times.Length; k++)
        {
            if (!(delays[k] >= 0)) throw new InputException($"data delay {delays[k]:G6} s: delays count from the start of stage '{readout.Stage}' and must be >= 0");
            if (dynamics.IsPastEnd(times[k]))
                throw new InputException($"data delay {delays[k]:G6} s runs past the end of the scenario ({dynamics.EndS - start:G6} s after the start of stage '{readout.Stage}'); lengthen its last stage");
        }
        var result = new ReadoutPrediction[delays.Count];
        dynamics.Walk(times, (k, v, mean) =>
        {
            cancel.ThrowIfCancellationRequested();
            int a = 2 * mode, b = a + 1;
            double vx = v[a * n + a], vp = v[b * n + b], c = 0.5 * (v[a * n + b] + v[b * n + a]);
            double occupancy = Physics.ModeOccupancy(vx, vp, mean[a], mean[b]);
            result[k] = new ReadoutPrediction(vx + addedNoise, vp + addedNoise, c, mean[a], mean[b], occupancy);
        });
        return result;
    }
}

using Decohere.Core;
using Decohere.Engine;
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
/// with <see cref="Dynamics.Solve"/>, and the state is carried from the readout stage's start through the sorted delays
/// with exact Van Loan steps (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)), one discretisation per
/// distinct gap, so evenly spaced delays cost one matrix exponential.
/// </summary>
public sealed class ReadoutModel
{
    private readonly Scenario _scenario;
    private readonly Readout _readout;

    /// <summary>Builds the model of <paramref name="scenario"/>'s readout with the given free parameters.</summary>
    /// <exception cref="InputException">The scenario has no readout, an amplification readout, or its readout mode is not in the state.</exception>
    public ReadoutModel(Scenario scenario, IReadOnlyList<ParameterPath> free)
    {
        _scenario = scenario;
        _readout = scenario.Readout ?? throw new InputException($"scenario '{scenario.Name}' has no readout block: a fit needs readout.mode and readout.stage");
        if (_readout.Method != ReadoutMethod.Phenomenological)
            throw new InputException("readout.method: the fit models the phenomenological readout only (added noise on both quadratures); " +
                "refer amplified data to the amplifier's input and use method: phenomenological with readout.added_noise");
        if (!Model.ModelBuilder.StateModes(scenario).Any(m => m.Name == _readout.Mode))
            throw new InputException($"readout.mode: '{_readout.Mode}' is not in the state vector of the {scenario.Model.ToString().ToLowerInvariant()} model; measure a mechanical mode or use model: full");
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
    public ReadoutPrediction[] Predict(IReadOnlyList<double> values, IReadOnlyList<double> delays) => Predict(Apply(values), delays);

    /// <summary>Predictions of an already-modified scenario at the given delays.</summary>
    public static ReadoutPrediction[] Predict(Scenario scenario, IReadOnlyList<double> delays)
    {
        var readout = scenario.Readout!;
        var dynamics = Dynamics.Solve(scenario);
        int stage = scenario.StageIndex(readout.Stage);
        int mode = dynamics.ModeNames.IndexOf(readout.Mode);
        int n = 2 * dynamics.ModeNames.Length;
        var order = Enumerable.Range(0, delays.Count).OrderBy(k => delays[k]).ToArray();
        var result = new ReadoutPrediction[delays.Count];
        var v = new double[n * n];
        var mean = new double[n];
        Load(dynamics.Boundaries[stage], v, mean);
        int current = stage;
        double t = dynamics.StageStarts[stage];
        var steppers = new Dictionary<(int, long), CovarianceStepper>();
        foreach (int k in order)
        {
            double target = dynamics.StageStarts[stage] + delays[k];
            // Later stages start from their exact boundary states.
            while (current + 1 < scenario.Stages.Length && target > dynamics.StageStarts[current + 1] * (1 + 1e-12) + 1e-18)
            {
                current++;
                t = dynamics.StageStarts[current];
                Load(dynamics.Boundaries[current], v, mean);
            }
            // Gaps are rounded to whole femtoseconds so evenly spaced delays share one discretisation; the next gap is
            // measured from the rounded time, so the rounding never accumulates.
            long femtoseconds = (long)Math.Round((target - t) * 1e15);
            if (femtoseconds > 0)
            {
                if (!steppers.TryGetValue((current, femtoseconds), out var stepper))
                {
                    var model = dynamics.Models[current];
                    stepper = new CovarianceStepper(VanLoan.Discretize(model.Drift, model.Diffusion, femtoseconds * 1e-15));
                    steppers[(current, femtoseconds)] = stepper;
                }
                stepper.Step(v, mean);
                t += femtoseconds * 1e-15;
            }
            int a = 2 * mode, b = a + 1;
            double vx = v[a * n + a], vp = v[b * n + b], c = 0.5 * (v[a * n + b] + v[b * n + a]);
            double occupancy = 0.5 * (vx + vp) - 0.5 + 0.5 * (mean[a] * mean[a] + mean[b] * mean[b]);
            result[k] = new ReadoutPrediction(vx + readout.AddedNoise, vp + readout.AddedNoise, c, mean[a], mean[b], occupancy);
        }
        return result;
    }

    private static void Load(GaussianState state, double[] v, double[] mean)
    {
        int n = mean.Length;
        for (int i = 0; i < n; i++)
        {
            mean[i] = state.Mean[i];
            for (int j = 0; j < n; j++) v[i * n + j] = state.Covariance[i, j];
        }
    }
}

using System.Collections.Immutable;
using Decohere.Numerics;

namespace Decohere.Engine;

/// <summary>Settings of the covariance time series. A null step takes the scenario's <c>output.step</c>.</summary>
public sealed record EvolutionSettings(double? OutputStepS = null);

/// <summary>
/// The covariance time series of a scenario: rows at every multiple of the output step and at every stage
/// boundary, each with the moments of every mode of the state vector.
/// </summary>
public sealed class Evolution
{
    /// <summary>The exact dynamics the series was stepped from.</summary>
    public required Dynamics Dynamics { get; init; }

    /// <summary>Output times (s), strictly increasing.</summary>
    public required double[] Times { get; init; }

    /// <summary>Stage index of each output time.</summary>
    public required int[] StageOfTime { get; init; }

    /// <summary>Moments[time, mode].</summary>
    public required ModeMoments[,] Moments { get; init; }

    /// <summary>The output step used (s).</summary>
    public required double OutputStepS { get; init; }

    /// <summary>Modes in state-vector order.</summary>
    public ImmutableArray<string> ModeNames => Dynamics.ModeNames;

    /// <summary>Steps the scenario with exact per-step propagators (Φ, Q), composing no ODE error.</summary>
    public static Evolution Run(Dynamics dynamics, EvolutionSettings? settings = null)
    {
        var scenario = dynamics.Scenario;
        double step = settings?.OutputStepS ?? scenario.OutputStepS;
        int modes = dynamics.ModeNames.Length, n = 2 * modes;
        var times = new List<double>();
        var stages = new List<int>();
        var moments = new List<ModeMoments[]>();

        var v = dynamics.Boundaries[0].Covariance.ToRowMajorArray();
        var mean = dynamics.Boundaries[0].Mean.ToArray();
        void Record(double t, int stage)
        {
            var row = new ModeMoments[modes];
            for (int j = 0; j < modes; j++)
                row[j] = ModeMoments.From(v[(2 * j) * n + 2 * j], v[(2 * j + 1) * n + 2 * j + 1], v[(2 * j) * n + 2 * j + 1], mean[2 * j], mean[2 * j + 1]);
            times.Add(t);
            stages.Add(stage);
            moments.Add(row);
        }
        Record(0, 0);

        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            double t0 = dynamics.StageStarts[i], t1 = t0 + scenario.Stages[i].DurationS;
            var model = dynamics.Models[i];
            var steppers = new Dictionary<long, CovarianceStepper>();
            CovarianceStepper StepperFor(double dt)
            {
                long key = BitConverter.DoubleToInt64Bits(dt);
                if (!steppers.TryGetValue(key, out var s))
                    steppers[key] = s = new CovarianceStepper(VanLoan.Discretize(model.Drift, model.Diffusion, dt));
                return s;
            }
            // Grid points k·step strictly inside the stage, then the stage end itself.
            long k = (long)Math.Floor(t0 / step + 1e-9) + 1;
            double previous = t0;
            var uniform = StepperFor(step);
            for (; k * step < t1 - 1e-9 * step; k++)
            {
                double t = k * step;
                double dt = t - previous;
                (Math.Abs(dt - step) <= 1e-9 * step ? uniform : StepperFor(dt)).Step(v, mean);
                Record(t, i);
                previous = t;
            }
            if (t1 - previous > 0)
            {
                // The stage end comes from its exact boundary state, so the grid cannot drift from it.
                var end = dynamics.Boundaries[i + 1];
                end.Covariance.ToRowMajorArray().CopyTo(v, 0);
                end.Mean.ToArray().CopyTo(mean, 0);
                Record(t1, i);
            }
        }

        var table = new ModeMoments[times.Count, modes];
        for (int r = 0; r < times.Count; r++)
            for (int j = 0; j < modes; j++) table[r, j] = moments[r][j];
        return new Evolution { Dynamics = dynamics, Times = [.. times], StageOfTime = [.. stages], Moments = table, OutputStepS = step };
    }
}

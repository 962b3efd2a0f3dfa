using System.Collections.Immutable;

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

    /// <summary>The moments of every mode on the output grid, from the dynamics' exact walk through the grid's times.</summary>
    public static Evolution Run(Dynamics dynamics, EvolutionSettings? settings = null)
    {
        var grid = dynamics.OutputGrid(settings?.OutputStepS);
        int modes = dynamics.ModeNames.Length, n = 2 * modes;
        var table = new ModeMoments[grid.Times.Length, modes];
        dynamics.Walk(grid.Times, (k, v, mean) =>
        {
            for (int j = 0; j < modes; j++)
                table[k, j] = ModeMoments.From(v[(2 * j) * n + 2 * j], v[(2 * j + 1) * n + 2 * j + 1], v[(2 * j) * n + 2 * j + 1], mean[2 * j], mean[2 * j + 1]);
        });
        return new Evolution { Dynamics = dynamics, Times = [.. grid.Times], StageOfTime = [.. grid.Stages], Moments = table, OutputStepS = grid.StepS };
    }
}

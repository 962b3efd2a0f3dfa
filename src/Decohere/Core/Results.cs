using System.Collections.Immutable;
using System.Diagnostics;

namespace Decohere.Core;

/// <summary>How an analysis ended. Failures that stop it are exceptions; a result always holds data.</summary>
public enum ResultStatus
{
    /// <summary>Completed without warnings.</summary>
    Success,
    /// <summary>Completed; the warnings say what to look at (an unidentified parameter, a delay past the scenario's end…).</summary>
    SuccessWithWarnings,
    /// <summary>Completed, but some parts failed and hold no values (sweep points whose metrics could not be evaluated).</summary>
    PartialFailure,
}

/// <summary>The work an analysis did: wall-clock time and, where it counts them, model evaluations.</summary>
/// <param name="Elapsed">Wall-clock time of the analysis (without writing reports).</param>
/// <param name="Evaluations">Model evaluations (objective calls of a fit, points of a sweep, grid points of a tolerance map); 0 where not counted.</param>
public sealed record WorkStatistics(TimeSpan Elapsed, long Evaluations = 0)
{
    /// <summary>The work since <paramref name="startTimestamp"/> (a <see cref="Stopwatch.GetTimestamp"/> value).</summary>
    public static WorkStatistics Since(long startTimestamp, long evaluations = 0) =>
        new(Stopwatch.GetElapsedTime(startTimestamp), evaluations);
}

/// <summary>
/// What every analysis result carries beside its data: where it came from, how it ended, what to look at and what it
/// cost. Results hold data only; the classes in <c>Reports</c> write them.
/// </summary>
public interface IAnalysisResult
{
    /// <summary>Scenario, seed and tool version the result came from.</summary>
    Provenance Provenance { get; }

    /// <summary>How the analysis ended.</summary>
    ResultStatus Status { get; }

    /// <summary>Everything the user should look at, in plain words.</summary>
    ImmutableArray<string> Warnings { get; }

    /// <summary>Time and evaluations spent.</summary>
    WorkStatistics Work { get; }
}

/// <summary>Helpers shared by the results.</summary>
public static class ResultStatuses
{
    /// <summary><see cref="ResultStatus.SuccessWithWarnings"/> when there are warnings, else <see cref="ResultStatus.Success"/>.</summary>
    public static ResultStatus From(IReadOnlyCollection<string> warnings) =>
        warnings.Count > 0 ? ResultStatus.SuccessWithWarnings : ResultStatus.Success;
}

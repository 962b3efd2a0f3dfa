using System.Collections.Immutable;
using System.Diagnostics;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Scenarios;

namespace Decohere.Analyses.Check;

/// <summary>A scenario's check: the solved dynamics and the derived quantities a physicist looks at first.</summary>
public sealed record CheckResult(Scenario Scenario, Dynamics Dynamics, ScenarioReport Report, Provenance Provenance, WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Report.Warnings);

    /// <inheritdoc/>
    public ImmutableArray<string> Warnings => Report.Warnings;
}

/// <summary>Checks a scenario: solves every stage and derives couplings, cooperativities, occupancies, stability and predicted squeezing.</summary>
public static class CheckAnalysis
{
    /// <summary>Checks <paramref name="scenario"/>.</summary>
    /// <exception cref="Numerics.UnstableDynamicsException">A stage cannot be solved.</exception>
    public static CheckResult Solve(Scenario scenario)
    {
        long started = Stopwatch.GetTimestamp();
        var dynamics = Dynamics.Solve(scenario);
        return new CheckResult(scenario, dynamics, ScenarioReport.Of(dynamics), Provenance.For(scenario), WorkStatistics.Since(started));
    }
}

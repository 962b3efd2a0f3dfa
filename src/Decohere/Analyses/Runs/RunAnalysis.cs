using System.Collections.Immutable;
using System.Diagnostics;
using Decohere.Model.Readouts;
using Decohere.Analyses.Check;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Sampling;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Runs;

/// <summary>Where a long run reports its progress: one counter per named task (shots, trajectories) with its total.</summary>
public interface IRunProgress
{
    /// <summary>Starts a task of <paramref name="total"/> units; the returned reporter receives the units done so far.</summary>
    IProgress<long> Start(string name, long total);
}

/// <summary>One stream of records a run produces faster than it could hold them: written batch by batch, then committed.</summary>
/// <typeparam name="TBatch">The sampler's batch.</typeparam>
public interface IRunStream<in TBatch> : IAsyncDisposable
{
    /// <summary>Takes one batch (the buffers are reused after the call returns).</summary>
    ValueTask WriteAsync(TBatch batch, CancellationToken cancel);

    /// <summary>Marks the stream complete; disposing an uncommitted stream discards it.</summary>
    Task CommitAsync();
}

/// <summary>
/// Where a run streams its shots and trajectories (10⁸ shots do not fit in memory). Implemented by the report side
/// (Parquet files); the run only hands batches over.
/// </summary>
public interface IRunStreams
{
    /// <summary>Opens the stream of the sampler's shots.</summary>
    Task<IRunStream<ShotBatch>> OpenShotsAsync(ShotSampler sampler, Provenance provenance, CancellationToken cancel);

    /// <summary>Opens the stream of the sampler's trajectories.</summary>
    Task<IRunStream<TrajectoryBatch>> OpenTrajectoriesAsync(TrajectorySampler sampler, Provenance provenance, CancellationToken cancel);
}

/// <summary>Settings of a run: trajectories to sample (0: none) and the sampler's settings.</summary>
public sealed record RunSettings(int Trajectories = 0, SamplerSettings? Sampler = null)
{
    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (Trajectories < 0) throw new InputException($"trajectories: {Trajectories} is negative; give a count ≥ 0");
    }
}

/// <summary>The shots' estimates of a run with a readout.</summary>
public sealed record SamplingOutput(ShotSampler Sampler, IReadOnlyList<ReadoutEstimate> Estimates);

/// <summary>The trajectories a run sampled (streamed, not kept): how many, on how many times, of which state components.</summary>
public sealed record TrajectoryOutput(long Count, int Times, ImmutableArray<int> Components);

/// <summary>
/// What a run produced: the solved dynamics, the covariance table's evolution, the check of the scenario and, with a
/// readout, the shots' estimates; shots and trajectories themselves went to the streams.
/// </summary>
public sealed record RunResult(
    Scenario Scenario,
    RunSettings Settings,
    Dynamics Dynamics,
    Evolution Evolution,
    ScenarioReport Check,
    SamplingOutput? Sampling,
    TrajectoryOutput? Trajectories,
    Provenance Provenance,
    ResultStatus Status,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult;

/// <summary>
/// The main job on one scenario: evolve the covariances exactly, and with a readout sample its shots and estimate what
/// they show. Shots and trajectories stream to <see cref="IRunStreams"/> as they are drawn, so memory stays bounded;
/// everything else is in the result, for a report to write.
/// </summary>
public static class RunAnalysis
{
    /// <summary>Runs <paramref name="scenario"/>.</summary>
    /// <param name="scenario">The validated scenario.</param>
    /// <param name="settings">Trajectories and sampler settings (default: none, defaults).</param>
    /// <param name="streams">Where shots and trajectories go (null: drawn and dropped; the estimates are still made).</param>
    /// <param name="progress">Progress sink for the long tasks, or null.</param>
    /// <param name="onReadout">Called once the readout chain is known (e.g. to print an amplification readout's gain).</param>
    /// <param name="cancel">Stops the run; an uncommitted stream is discarded.</param>
    public static async Task<RunResult> SolveAsync(Scenario scenario, RunSettings? settings = null, IRunStreams? streams = null,
        IRunProgress? progress = null, Action<IReadoutChain>? onReadout = null, CancellationToken cancel = default)
    {
        settings ??= new RunSettings();
        settings.Validate();
        long started = Stopwatch.GetTimestamp();
        var sampling = settings.Sampler ?? SamplerSettings.Default;
        var dynamics = Dynamics.Solve(scenario);
        // The covariance table's walk through its grid is one thread's work and the shots need only the states at the
        // delays: on two cores the shots and their estimates are drawn while the grid is walked.
        var walk = Task.Run(() => Evolution.Run(dynamics), cancel);
        var check = ScenarioReport.Of(dynamics);
        var provenance = Provenance.For(scenario);
        cancel.ThrowIfCancellationRequested();

        SamplingOutput? shots = null;
        ShotSampler? sampler = scenario.Readout is null ? null : new ShotSampler(scenario, dynamics, sampling);
        if (sampler is not null)
        {
            onReadout?.Invoke(sampler.Chain);
            var shotProgress = progress?.Start("shots", sampler.TotalShots);
            QuadratureStatistics[] stats;
            if (streams is null)
            {
                stats = await sampler.RunAsync(null, shotProgress, cancel);
            }
            else
            {
                await using var stream = await streams.OpenShotsAsync(sampler, provenance, cancel);
                stats = await sampler.RunAsync(stream.WriteAsync, shotProgress, cancel);
                await stream.CommitAsync();
            }
            // Each delay's bootstrap has its own seed, so the delays are estimated in parallel with the same numbers.
            var estimates = new ReadoutEstimate[sampler.Delays.Length];
            Parallel.For(0, estimates.Length, sampling.Parallel(cancel), k => estimates[k] = ReadoutEstimator.Estimate(stats[k],
                sampler.Chain.AddedNoise, sampler.Delays[k].Model, Seeds.Derive(scenario.Seed, SeedStream.Bootstrap, k), sampling.BootstrapResamples, sampling.Confidence));
            shots = new SamplingOutput(sampler, estimates);
        }

        var evolution = await walk;

        TrajectoryOutput? trajectories = null;
        if (settings.Trajectories > 0)
        {
            // The readout mode's trajectories, or every mechanical mode's when there is no readout.
            var modes = sampler is not null
                ? [sampler.Chain.ModeIndex]
                : dynamics.ModeNames.Select((n, j) => (n, j)).Where(p => scenario.ModeNamed(p.n).Kind == ModeKind.Mechanical).Select(p => p.j).ToArray();
            var trajectorySampler = new TrajectorySampler(dynamics, modes.SelectMany(j => new[] { 2 * j, 2 * j + 1 }), sampling);
            var trajectoryProgress = progress?.Start("trajectories", settings.Trajectories);
            if (streams is null)
            {
                await trajectorySampler.RunAsync(settings.Trajectories, (_, _) => ValueTask.CompletedTask, trajectoryProgress, cancel);
            }
            else
            {
                await using var stream = await streams.OpenTrajectoriesAsync(trajectorySampler, provenance, cancel);
                await trajectorySampler.RunAsync(settings.Trajectories, stream.WriteAsync, trajectoryProgress, cancel);
                await stream.CommitAsync();
            }
            trajectories = new TrajectoryOutput(settings.Trajectories, trajectorySampler.Times.Length, trajectorySampler.Components);
        }
        cancel.ThrowIfCancellationRequested();
        var warnings = check.Warnings.AddRange(shots is null ? [] : shots.Estimates
            .Select((e, k) => ReadoutEstimator.UncertaintyWarning(e, shots.Sampler.Delays[k].DelayS, sampling.Confidence)).OfType<string>());
        return new RunResult(scenario, settings, dynamics, evolution, check, shots, trajectories, provenance,
            ResultStatuses.From(warnings), warnings, WorkStatistics.Since(started, sampler?.TotalShots ?? 0));
    }
}

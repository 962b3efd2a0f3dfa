using System.Text.Json.Nodes;
using Decohere.Analyses.Check;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
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

/// <summary>Settings of a run: trajectories to sample (0: none) and the sampler's settings.</summary>
public sealed record RunSettings(int Trajectories = 0, SamplerSettings? Sampler = null);

/// <summary>What a run produced: the solved dynamics, the report, the files written and, with a readout, the estimates.</summary>
public sealed record RunOutput(Dynamics Dynamics, ScenarioReport Report, IReadOnlyList<string> Paths, SamplingOutput? Sampling = null);

/// <summary>The shots' estimates of a run with a readout.</summary>
public sealed record SamplingOutput(ShotSampler Sampler, IReadOnlyList<ReadoutEstimate> Estimates);

/// <summary>
/// The main job on one scenario: evolve the covariances exactly, and with a readout sample its shots and estimate what
/// they show; write every table, plot and summary into a directory. summary.json is written last, so it describes only
/// complete outputs; every file is written atomically, so a cancelled run leaves finished files and no partial one.
/// </summary>
public static class ScenarioRun
{
    /// <summary>Runs <paramref name="scenario"/> and writes its outputs into <paramref name="directory"/>.</summary>
    /// <param name="scenario">The validated scenario.</param>
    /// <param name="directory">Output directory, created if needed.</param>
    /// <param name="settings">Trajectories and sampler settings (default: none, defaults).</param>
    /// <param name="progress">Progress sink for the long tasks, or null.</param>
    /// <param name="onReadout">Called once the readout chain is known (e.g. to print an amplification readout's gain).</param>
    /// <param name="cancel">Stops the run; finished files stay, partial ones are deleted.</param>
    public static async Task<RunOutput> WriteAsync(Scenario scenario, string directory, RunSettings? settings = null,
        IRunProgress? progress = null, Action<ReadoutChain>? onReadout = null, CancellationToken cancel = default)
    {
        settings ??= new RunSettings();
        var sampling = settings.Sampler ?? SamplerSettings.Default;
        var dynamics = Dynamics.Solve(scenario);
        var evolution = Evolution.Run(dynamics);
        var report = ScenarioReport.Of(dynamics);
        var metadata = Provenance.For(scenario);
        cancel.ThrowIfCancellationRequested();
        var owned = OutputDirectory.Claim(directory, OutputSet.Run);
        string table = Path.Combine(directory, "covariance.parquet");
        string summary = Path.Combine(directory, "summary.json");
        string png = Path.Combine(directory, "variance.png"), svg = Path.Combine(directory, "variance.svg");
        await CovarianceTable.WriteAsync(evolution, table, metadata, cancel);
        cancel.ThrowIfCancellationRequested();
        VariancePlot.Save(evolution, png, svg);
        var paths = new List<string> { table, summary, png, svg };
        var json = SummaryJson.Build(dynamics, report, metadata);

        IReadOnlyList<ReadoutEstimate>? estimates = null;
        ShotSampler? sampler = scenario.Readout is null ? null : new ShotSampler(scenario, dynamics, sampling);
        if (sampler is not null)
        {
            onReadout?.Invoke(sampler.Chain);
            var shotProgress = progress?.Start("shots", sampler.TotalShots);
            string shotsPath = Path.Combine(directory, "shots.parquet");
            await using (var shots = await ShotsTable.CreateAsync(shotsPath, sampler, metadata, cancel))
            {
                var stats = await sampler.RunAsync(shots.WriteAsync, shotProgress, cancel);
                await shots.CommitAsync();
                estimates = [.. sampler.Delays.Select(d => ReadoutEstimator.Estimate(stats[d.Index], sampler.Chain.AddedNoise, d.Model,
                    RandomStream.Derive(scenario.Seed, StreamPurpose.Bootstrap, d.Index), sampling.BootstrapResamples, sampling.Confidence))];
            }
            string estimatesPath = Path.Combine(directory, "estimates.parquet"), estimatesPng = Path.Combine(directory, "estimates.png");
            await EstimatesTable.WriteAsync(estimatesPath, sampler, estimates, sampling.Confidence, metadata, cancel);
            cancel.ThrowIfCancellationRequested();
            EstimatesPlot.Save(sampler, estimates, estimatesPng);
            paths.AddRange([shotsPath, estimatesPath, estimatesPng]);
            json["readout"] = ReadoutSummary.Build(sampler, estimates, sampling);
        }

        if (settings.Trajectories > 0)
        {
            // The readout mode's trajectories, or every mechanical mode's when there is no readout.
            var modes = sampler is not null
                ? [sampler.Chain.ModeIndex]
                : dynamics.ModeNames.Select((n, j) => (n, j)).Where(p => scenario.ModeNamed(p.n).Kind == ModeKind.Mechanical).Select(p => p.j).ToArray();
            var trajectorySampler = new TrajectorySampler(dynamics, modes.SelectMany(j => new[] { 2 * j, 2 * j + 1 }), sampling);
            var trajectoryProgress = progress?.Start("trajectories", settings.Trajectories);
            string trajectoriesPath = Path.Combine(directory, "trajectories.parquet");
            await using (var file = await TrajectoriesTable.CreateAsync(trajectoriesPath, trajectorySampler, metadata, cancel))
            {
                await trajectorySampler.RunAsync(settings.Trajectories, file.WriteAsync, trajectoryProgress, cancel);
                await file.CommitAsync();
            }
            paths.Add(trajectoriesPath);
            json["trajectories"] = new JsonObject { ["count"] = settings.Trajectories, ["times"] = trajectorySampler.Times.Length, ["seed"] = scenario.Seed };
        }
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(json, summary);
        owned.Record(paths);
        return new RunOutput(dynamics, report, paths, sampler is null ? null : new SamplingOutput(sampler, estimates!));
    }
}

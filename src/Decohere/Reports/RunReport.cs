using System.Text.Json.Nodes;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.Sampling;

namespace Decohere.Reports;

/// <summary>
/// Writes a run: <c>covariance.parquet</c>, <c>variance.png</c>/<c>.svg</c>, with a readout <c>estimates.parquet</c> and
/// <c>estimates.png</c>, and last <c>summary.json</c>, so a summary describes only complete outputs. The shots and
/// trajectories were streamed during the run by <see cref="RunFiles"/>.
/// </summary>
/// <param name="files">The files the run streamed into; with them, iq.png/.svg shows the recorded shots.</param>
public sealed class RunReport(RunFiles? files = null) : IReport<RunResult>
{
    /// <inheritdoc/>
    public async Task<IReadOnlyList<string>> WriteAsync(RunResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        var provenance = result.Provenance;
        string table = Path.Combine(directory, "covariance.parquet");
        string summary = Path.Combine(directory, "summary.json");
        await CovarianceTable.WriteAsync(result.Evolution, table, provenance, cancel);
        cancel.ThrowIfCancellationRequested();
        var paths = new List<string> { table, summary };
        paths.AddRange(VariancePlot.Save(result.Evolution, Path.Combine(directory, "variance")));
        var json = SummaryJson.Build(result.Dynamics, result.Check, provenance);

        if (result.Sampling is { } sampling)
        {
            var settings = result.Settings.Sampler ?? SamplerSettings.Default;
            string estimates = Path.Combine(directory, "estimates.parquet");
            await EstimatesTable.WriteAsync(estimates, sampling.Sampler, sampling.Estimates, settings.Confidence, provenance, cancel);
            cancel.ThrowIfCancellationRequested();
            paths.Add(estimates);
            paths.AddRange(EstimatesPlot.Save(result.Evolution, sampling.Sampler, sampling.Estimates, Path.Combine(directory, "estimates")));
            if (files?.Histograms is { } histograms)
                paths.AddRange(IqPlot.Save(histograms, sampling.Sampler, sampling.Estimates, Path.Combine(directory, "iq")));
            json["readout"] = ReadoutSummary.Build(sampling.Sampler, sampling.Estimates, settings);
        }
        // The run's warnings: the check's and the estimates' (an uncertainty-relation violation names its delay).
        json["warnings"] = SummaryJson.Strings(result.Warnings);
        if (result.Trajectories is { } t)
            json["trajectories"] = new JsonObject { ["count"] = t.Count, ["times"] = t.Times, ["seed"] = result.Scenario.Seed };
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(json, summary);
        return paths;
    }
}

/// <summary>
/// The files a run streams into while it samples: <c>shots.parquet</c> and <c>trajectories.parquet</c>. Each is written
/// to a temporary file and renamed when complete, so a stopped run leaves none half-written.
/// </summary>
public sealed class RunFiles(string directory) : IRunStreams
{
    private readonly List<string> _paths = [];

    /// <summary>The (i, q) histograms of the shots streamed so far (null before the shots stream opened).</summary>
    public IqHistograms? Histograms { get; private set; }

    /// <summary>The files opened so far (complete once the run returned).</summary>
    public IReadOnlyList<string> Paths => _paths;

    /// <inheritdoc/>
    public async Task<IRunStream<ShotBatch>> OpenShotsAsync(ShotSampler sampler, Provenance provenance, CancellationToken cancel)
    {
        Directory.CreateDirectory(directory);
        string path = Path.Combine(directory, "shots.parquet");
        var table = await ShotsTable.CreateAsync(path, sampler, provenance, cancel);
        _paths.Add(path);
        return Histograms = new IqHistograms(sampler, table);
    }

    /// <inheritdoc/>
    public async Task<IRunStream<TrajectoryBatch>> OpenTrajectoriesAsync(TrajectorySampler sampler, Provenance provenance, CancellationToken cancel)
    {
        Directory.CreateDirectory(directory);
        string path = Path.Combine(directory, "trajectories.parquet");
        var table = await TrajectoriesTable.CreateAsync(path, sampler, provenance, cancel);
        _paths.Add(path);
        return table;
    }
}

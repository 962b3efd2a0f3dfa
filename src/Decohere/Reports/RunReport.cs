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
public sealed class RunReport : IReport<RunResult>
{
    /// <inheritdoc/>
    public async Task<IReadOnlyList<string>> WriteAsync(RunResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        var provenance = result.Provenance;
        string table = Path.Combine(directory, "covariance.parquet");
        string summary = Path.Combine(directory, "summary.json");
        string png = Path.Combine(directory, "variance.png"), svg = Path.Combine(directory, "variance.svg");
        await CovarianceTable.WriteAsync(result.Evolution, table, provenance, cancel);
        cancel.ThrowIfCancellationRequested();
        VariancePlot.Save(result.Evolution, png, svg);
        var paths = new List<string> { table, summary, png, svg };
        var json = SummaryJson.Build(result.Dynamics, result.Check, provenance);

        if (result.Sampling is { } sampling)
        {
            var settings = result.Settings.Sampler ?? SamplerSettings.Default;
            string estimates = Path.Combine(directory, "estimates.parquet"), estimatesPng = Path.Combine(directory, "estimates.png");
            await EstimatesTable.WriteAsync(estimates, sampling.Sampler, sampling.Estimates, settings.Confidence, provenance, cancel);
            cancel.ThrowIfCancellationRequested();
            EstimatesPlot.Save(sampling.Sampler, sampling.Estimates, estimatesPng);
            paths.AddRange([estimates, estimatesPng]);
            json["readout"] = ReadoutSummary.Build(sampling.Sampler, sampling.Estimates, settings);
        }
        // The run's warnings: the check's and the estimates' (an uncertainty-relation violation names its delay).
        json["warnings"] = new JsonArray([.. result.Warnings.Select(w => (JsonNode)JsonValue.Create(w))]);
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

    /// <summary>The files opened so far (complete once the run returned).</summary>
    public IReadOnlyList<string> Paths => _paths;

    /// <inheritdoc/>
    public async Task<IRunStream<ShotBatch>> OpenShotsAsync(ShotSampler sampler, Provenance provenance, CancellationToken cancel)
    {
        Directory.CreateDirectory(directory);
        string path = Path.Combine(directory, "shots.parquet");
        var table = await ShotsTable.CreateAsync(path, sampler, provenance, cancel);
        _paths.Add(path);
        return table;
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

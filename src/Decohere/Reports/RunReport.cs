using System.Text.Json.Nodes;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.Reports.Plotting;
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
    /// <summary>
    /// Loads, on a worker thread, what writing the report first needs: the native Parquet writer and the drawing library
    /// with the figures' font (together some 20 ms of loading, relocating and scanning fonts), so that a caller can start
    /// it before the run and let it overlap the engine's walk. Failures are left to the report itself to meet and explain.
    /// </summary>
    public static Task PrepareAsync() => Task.Run(() =>
    {
        try
        {
            using (new ParquetSharp.WriterPropertiesBuilder()) { }
            using var surface = SkiaSharp.SKSurface.Create(new SkiaSharp.SKImageInfo(160, 90));
            Figure.New().Render(surface.Canvas, 160, 90);
        }
        catch (Exception)
        {
            // Nothing is written here: the same step fails again where the report can say what went wrong.
        }
    });

    /// <inheritdoc/>
    public async Task<IReadOnlyList<string>> WriteAsync(RunResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        var provenance = result.Provenance;
        string table = Path.Combine(directory, "covariance.parquet");
        string summary = Path.Combine(directory, "summary.json");
        var settings = result.Settings.Sampler ?? SamplerSettings.Default;
        var sampling = result.Sampling;
        // The tables and each figure depend on the result alone: they are written side by side (each atomically, into
        // files of its own), which on two cores hides the tables behind the plots. A failure in one stops the others at
        // their next check; summary.json, which describes them all, is written only once every one is complete.
        using var failed = CancellationTokenSource.CreateLinkedTokenSource(cancel);
        Task<string[]> Side(Func<CancellationToken, Task<string[]>> write) => Task.Run(async () =>
        {
            try
            {
                return await write(failed.Token);
            }
            catch
            {
                await failed.CancelAsync();
                throw;
            }
        }, failed.Token);
        // Each figure's PNG is drawn at once, its SVG after the SVG of the figure before (see FigureOutput), so the bytes of
        // every file are those of one figure after the other.
        Task svgs = Task.CompletedTask;
        Task<string[]> Drawn(Func<FigureOutput> draw)
        {
            var before = svgs;
            var written = Side(async token =>
            {
                var drawing = draw();
                string png = drawing.WritePng();
                await Task.WhenAny(before);
                token.ThrowIfCancellationRequested();
                return [png, drawing.WriteSvg()];
            });
            svgs = written;
            return written;
        }
        var writes = new List<Task<string[]>>
        {
            Side(async token => { await CovarianceTable.WriteAsync(result.Evolution, table, provenance, token); return [table]; }),
            Drawn(() => VariancePlot.Draw(result.Evolution, Path.Combine(directory, "variance"))),
        };
        if (sampling is not null)
        {
            string estimates = Path.Combine(directory, "estimates.parquet");
            writes.Add(Side(async token =>
            {
                await EstimatesTable.WriteAsync(estimates, sampling.Sampler, sampling.Estimates, settings.Confidence, provenance, token);
                return [estimates];
            }));
            writes.Add(Drawn(() => EstimatesPlot.Draw(result.Evolution, sampling.Sampler, sampling.Estimates, Path.Combine(directory, "estimates"))));
            if (files?.Histograms is { } histograms)
                writes.Add(Drawn(() => IqPlot.Draw(histograms, sampling.Sampler, sampling.Estimates, Path.Combine(directory, "iq"))));
        }
        var json = SummaryJson.Build(result.Dynamics, result.Check, provenance);
        if (sampling is not null) json["readout"] = ReadoutSummary.Build(sampling.Sampler, sampling.Estimates, settings);
        // The run's warnings: the check's and the estimates' (an uncertainty-relation violation names its delay).
        json["warnings"] = SummaryJson.Strings(result.Warnings);
        if (result.Trajectories is { } t)
            json["trajectories"] = new JsonObject { ["count"] = t.Count, ["times"] = t.Times, ["seed"] = result.Scenario.Seed };
        try
        {
            await Task.WhenAll(writes);
        }
        catch when (cancel.IsCancellationRequested)
        {
            cancel.ThrowIfCancellationRequested();
            throw;
        }
        catch when (writes.FirstOrDefault(w => w.IsFaulted) is { } first)
        {
            // The failure itself, not the cancellations it caused in the other writers.
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(first.Exception!.InnerException!);
            throw;
        }
        SummaryJson.Write(json, summary);
        // Paths in a fixed order: the table, the summary, then the other files in the order they were started.
        return [table, summary, .. writes.Skip(1).SelectMany(w => w.Result)];
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

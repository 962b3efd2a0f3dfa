using Spectre.Console;
using System.CommandLine;
using Decohere.IO;
using Decohere.Analyses;
using Decohere.Analyses.Sweeps;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere sweep [SCENARIO] --vary PATH=SPEC ... [--zip] [--metrics LIST] [--shard K/N] [--resume] [--out DIR]</c>:
/// evaluate metrics over a grid of parameter values and write sweep.parquet (or one shard's part file) and sweep.png.
/// </summary>
public static class SweepCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var vary = new Option<string[]>("--vary")
        {
            Description = $"A parameter to vary, as {SweepAxis.Forms}. Repeat for more axes (Cartesian product, first axis slowest).",
            Required = true,
            AllowMultipleArgumentsPerToken = false,
        };
        var zip = new Option<bool>("--zip") { Description = "Walk the --vary axes together (equal lengths) instead of taking their product." };
        var metrics = new Option<string?>("--metrics")
        {
            Description = $"Comma-separated metrics (default {Metrics.Default}): {string.Join(", ", Metrics.Usage)}. " +
                          "STAGE defaults to the last stage with tones, MODE to the readout mode, DELAY to the readout's last delay.",
        };
        var shard = new Option<string?>("--shard") { Description = "Run only shard K of N (K from 0 to N−1: points K, K+N, …) and write DIR/part-K-of-N.parquet; join the parts with 'decohere merge DIR'." };
        var resume = new Option<bool>("--resume") { Description = "Keep the points an earlier, stopped run of the same sweep finished (DIR/.chunks) and compute only the rest." };
        var seed = new Option<long?>("--seed") { Description = "Master seed (overrides the scenario's); each point's seed follows from it and the point index." };
        var threads = new Option<int?>("--threads") { Description = "Worker threads (default: every core)." };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var limits = new Cli.LimitOptions();
        var measured = new MeasuredOptions();
        var command = new Command("sweep", "Evaluate metrics (steady squeezing, stability, occupancy, resolution probability, …) over a grid of parameters; write sweep.parquet and sweep.png.")
        {
            scenario, vary, zip, metrics, shard, resume, seed, threads, output, format, quiet,
        };
        foreach (var option in limits.All.Concat(measured.All)) command.Options.Add(option);
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = measured.Read(parse).Apply(Cli.Load(parse.GetValue(scenario)));
            if (parse.GetValue(seed) is { } newSeed) s = s with { Seed = newSeed };
            var sweep = Sweep.Parse(s, parse.GetValue(vary) ?? [], parse.GetValue(zip), parse.GetValue(metrics));
            var settings = new SweepSettings
            {
                Shard = parse.GetValue(shard) is { } text ? SweepShard.Parse(text) : null,
                Resume = parse.GetValue(resume),
                Threads = parse.GetValue(threads) ?? -1,
            };
            settings.Validate();
            ResourceEstimates.Sweep(sweep, settings).Enforce(limits.Read(parse));
            string dir = Cli.OutputDirectory(parse.GetValue(output), s);
            string table = SweepReport.TableName(settings.Shard);
            var owned = OutputDirectory.Claim(dir, settings.Shard is null ? OutputSet.Sweep : OutputSet.SweepPart(table), settings.Resume ? [table] : []);
            bool isQuiet = parse.GetValue(quiet);
            var store = new SweepChunkStore(dir);

            SweepResult result;
            try
            {
                result = isQuiet || !console.Interactive
                    ? await SweepAnalysis.SolveAsync(sweep, settings, store, cancel)
                    : await WithProgress(console, sweep, settings, store, cancel);
            }
            catch (OperationCanceledException)
            {
                console.Error.MarkupLineInterpolated($"[yellow]stopped:[/] finished chunks are kept in {Path.Combine(dir, SweepChunkStore.ChunkDirectory)}; rerun with --resume to continue. No half-written file was left.");
                return Cli.Failure;
            }

            var paths = Cli.WithCsv(await new SweepReport().WriteAsync(result, dir, cancel), CsvExport.WantsCsv(parse.GetValue(format)), cancel);
            if (!isQuiet)
            {
                if (result.Shard is null && !SweepPlot.CanPlot(result.Description))
                    console.Notes(["no sweep.png for more than two multiplied axes."]);
                console.Out.MarkupLineInterpolated(
                    $"{result.Rows.Count} points{(result.Shard is { } p ? $" (shard {p})" : "")}: {result.Computed} computed, {result.Resumed} kept from an earlier run, {result.Failed} failed");
                console.Warnings(result.Warnings);
            }
            owned.Record(paths);
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    private static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["varied parameter"] = "--vary", ["sweep"] = "--vary", ["zipped axes"] = "--zip", ["metrics"] = "--metrics",
        ["shard"] = "--shard", ["resume"] = "--resume", ["threads"] = "--threads",
    };

    private static async Task<SweepResult> WithProgress(AppConsole console, Sweep sweep, SweepSettings settings, ISweepStore store, CancellationToken cancel)
    {
        SweepResult? result = null;
        await console.Error.Progress()
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
            .StartAsync(async ctx =>
            {
                var task = ctx.AddTask($"sweep {settings.Shard?.ToString() ?? ""}".Trim());
                result = await SweepAnalysis.SolveAsync(sweep, settings with
                {
                    OnStart = (total, done) => { task.MaxValue = Math.Max(total, 1); task.Value = done; },
                    OnPoint = () => task.Increment(1),
                }, store, cancel);
                task.Value = task.MaxValue;
            });
        return result!;
    }
}

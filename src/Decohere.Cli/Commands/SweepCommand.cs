using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere sweep [SCENARIO] --vary PATH=SPEC ... [--zip] [--metrics LIST] [--shard K/N] [--resume] [--out DIR]</c>:
/// evaluate metrics over a grid of parameter values and write sweep.parquet (or one shard's part file) and sweep.png.
/// </summary>
public static class SweepCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create()
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
        var quiet = Cli.QuietOption();
        var command = new Command("sweep", "Evaluate metrics (steady squeezing, stability, occupancy, resolution probability, …) over a grid of parameters; write sweep.parquet and sweep.png.")
        {
            scenario, vary, zip, metrics, shard, resume, seed, threads, output, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            if (parse.GetValue(seed) is { } newSeed) s = s with { Seed = newSeed };
            var sweep = Sweep.Parse(s, parse.GetValue(vary) ?? [], parse.GetValue(zip), parse.GetValue(metrics));
            SweepShard? part = parse.GetValue(shard) is { } text ? SweepShard.Parse(text) : null;
            int? t = parse.GetValue(threads);
            if (t is < 1) throw new InputException($"--threads {t}: must be at least 1");
            string dir = Cli.OutputDirectory(parse.GetValue(output), s);
            var owned = OutputDirectory.Claim(dir, part is { } p0 ? OutputSet.SweepPart(p0.FileName) : OutputSet.Sweep, parse.GetValue(resume) ? [part?.FileName ?? "sweep.parquet"] : []);
            bool isQuiet = parse.GetValue(quiet);
            var options = new SweepRunOptions { Shard = part, Resume = parse.GetValue(resume), MaxDegreeOfParallelism = t ?? -1 };

            SweepRunResult result;
            try
            {
                result = isQuiet || Console.IsErrorRedirected
                    ? await SweepRunner.RunAsync(sweep, dir, options, cancel)
                    : await WithProgress(sweep, dir, options, cancel);
            }
            catch (OperationCanceledException)
            {
                Cli.Error.MarkupLineInterpolated($"[yellow]stopped:[/] finished chunks are kept in {Path.Combine(dir, SweepRunner.ChunkDirectory)}; rerun with --resume to continue. No half-written file was left.");
                return Cli.Failure;
            }

            var paths = new List<string> { result.Path };
            if (part is null)
            {
                string png = Path.Combine(dir, "sweep.png");
                if (SweepPlot.Save(sweep.Description, result.Rows, s.Name, png)) paths.Add(Path.GetFullPath(png));
                else if (!isQuiet) Cli.Out.MarkupLine("[yellow]note:[/] no sweep.png for more than two multiplied axes.");
            }
            owned.Record(paths);
            if (!isQuiet) Summary(result, part);
            foreach (var path in paths) Cli.Out.WriteLine(path);
            return Cli.Ok;
        }));
        return command;
    }

    private static async Task<SweepRunResult> WithProgress(Sweep sweep, string dir, SweepRunOptions options, CancellationToken cancel)
    {
        SweepRunResult? result = null;
        await Cli.Error.Progress()
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
            .StartAsync(async ctx =>
            {
                var task = ctx.AddTask($"sweep {options.Shard?.ToString() ?? ""}".Trim());
                result = await SweepRunner.RunAsync(sweep, dir, options with
                {
                    OnStart = (total, done) => { task.MaxValue = Math.Max(total, 1); task.Value = done; },
                    OnPoint = () => task.Increment(1),
                }, cancel);
                task.Value = task.MaxValue;
            });
        return result!;
    }

    private static void Summary(SweepRunResult result, SweepShard? part)
    {
        Cli.Out.MarkupLineInterpolated(
            $"{result.Rows.Count} points{(part is { } p ? $" (shard {p})" : "")}: {result.Computed} computed, {result.Resumed} kept from an earlier run, {result.Failed} failed");
        var failed = result.Rows.FirstOrDefault(r => r.Error.Length > 0);
        if (failed is not null)
            Cli.Warnings([$"{result.Failed} point(s) failed and have nulls in the metric columns; see the error column (point {failed.Point}: {failed.Error})"]);
    }
}

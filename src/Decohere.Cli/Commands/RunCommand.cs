using Spectre.Console;
using System.CommandLine;
using Decohere.IO;
using Decohere.Model.Readouts;
using Decohere.Analyses;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere run [SCENARIO] [--out DIR] [--seed N] [--trajectories N] [--quiet]</c>: evolve the covariances and write the
/// results; with a readout, also sample the shots and estimate what they show.
/// </summary>
public static class RunCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var seed = new Option<long?>("--seed") { Description = "Random seed (overrides the scenario's seed)." };
        var trajectories = new Option<int>("--trajectories")
        {
            Description = "Also sample N trajectories of the readout mode through every stage (trajectories.parquet).",
            DefaultValueFactory = _ => 0,
        };
        var quiet = Cli.QuietOption();
        var limits = new Cli.LimitOptions();
        var measured = new MeasuredOptions();
        var command = new Command("run",
            "Evolve the scenario's Gaussian state exactly and write covariance.parquet, summary.json and variance.png/.svg; " +
            "with a readout, also sample shots (shots.parquet) and write the per-delay estimates (estimates.parquet, estimates.png/.svg, iq.png/.svg).")
        {
            scenario, output, format, seed, trajectories, quiet,
        };
        foreach (var option in limits.All.Concat(measured.All)) command.Options.Add(option);
        var flags = new Dictionary<string, string> { ["trajectories"] = "--trajectories" };
        command.SetAction((parse, cancel) => Cli.Guard(console, flags, async () =>
        {
            var s = measured.Read(parse).Apply(Cli.Load(parse.GetValue(scenario)));
            if (parse.GetValue(seed) is { } newSeed) s = s with { Seed = newSeed };
            var settings = new RunSettings(parse.GetValue(trajectories));
            settings.Validate();
            ResourceEstimates.Run(s, settings).Enforce(limits.Read(parse));
            string dir = Cli.OutputDirectory(parse.GetValue(output), s);
            bool isQuiet = parse.GetValue(quiet);
            void OnReadout(IReadoutChain chain)
            {
                if (!isQuiet) CheckCommand.PrintReadout(console.Out, chain);
            }
            var owned = OutputDirectory.Claim(dir, OutputSet.Run);
            var files = new RunFiles(dir);
            var prepared = RunReport.PrepareAsync();
            var result = !isQuiet && console.Interactive
                ? await console.Error.Progress()
                    .AutoClear(true)
                    .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
                    .StartAsync(context => RunAnalysis.SolveAsync(s, settings, files, new ProgressBars(context), OnReadout, cancel))
                : await RunAnalysis.SolveAsync(s, settings, files, null, OnReadout, cancel);
            await prepared;
            var paths = await new RunReport(files).WriteAsync(result, dir, cancel);
            if (!isQuiet)
            {
                console.Out.Write(StageTable(result.Dynamics));
                if (result.Sampling is { } sampling) console.Out.Write(EstimateTable(sampling));
                console.Warnings(result.Warnings);
            }
            var written = Cli.WithCsv([.. paths, .. files.Paths], CsvExport.WantsCsv(parse.GetValue(format)), cancel);
            owned.Record(written);
            console.Paths(written);
            return Cli.Ok;
        }));
        return command;
    }

    // Spectre progress bars on stderr, one per task the run starts.
    private sealed class ProgressBars(ProgressContext context) : IRunProgress
    {
        public IProgress<long> Start(string name, long total) => new Bar(context.AddTask(name, maxValue: total));

        private sealed class Bar(ProgressTask task) : IProgress<long>
        {
            public void Report(long value) => task.Value = value;
        }
    }

    /// <summary>Per delay and quantity, the estimate with its interval beside the model's value and the z-score.</summary>
    public static Table EstimateTable(SamplingOutput sampling)
    {
        var sampler = sampling.Sampler;
        var table = new Table().Title(
            $"[bold]{Markup.Escape(sampler.Chain.Mode)}[/] from {sampler.ShotsPerDelay} shots per delay (added noise {sampler.Chain.AddedNoise:G4} subtracted)");
        foreach (var h in new[] { "delay", "quantity", "estimate", "95% interval", "model", "z" })
            table.AddColumn(new TableColumn(h).RightAligned());
        string[] names = ["var_x", "var_p", "var_min", "var_max", "occupancy", "squeezing (dB)"];
        // One unit for all delays, chosen from the set ("0 ms, 1 ms, 8 ms").
        var delays = Reports.Plotting.DisplayUnits.FormatAll([.. sampler.Delays.Select(d => d.DelayS)], Dimension.Time);
        for (int k = 0; k < sampling.Estimates.Count; k++)
        {
            var e = sampling.Estimates[k];
            Estimate[] values = [e.VarX, e.VarP, e.VarMin, e.VarMax, e.Occupancy, e.SqueezingDb];
            for (int q = 0; q < values.Length; q++)
            {
                var v = values[q];
                string format = q == values.Length - 1 ? "F2" : "G4";
                string colour = Math.Abs(v.Z) > 3 ? "red" : "default";
                table.AddRow(q == 0 ? Markup.Escape(delays[k]) : "", names[q],
                    N(v.Value, format), $"[[{N(v.Low, format)}, {N(v.High, format)}]]", N(v.Model, format), $"[{colour}]{N(v.Z, "F1")}[/]");
            }
        }
        return table;
    }

    private static string N(double v, string format) =>
        double.IsPositiveInfinity(v) ? "∞" : double.IsNegativeInfinity(v) ? "−∞" : double.IsNaN(v) ? "–" : v.ToString(format);

    /// <summary>Per stage, the end variances, occupancy and squeezing of every mode.</summary>
    public static Table StageTable(Dynamics dynamics)
    {
        var table = new Table().Title($"[bold]{Markup.Escape(dynamics.Scenario.Name)}[/]: end of each stage");
        foreach (var h in new[] { "stage", "mode", "var_x", "var_p", "var_min", "occupancy", "squeezing (dB)" })
            table.AddColumn(new TableColumn(h).RightAligned());
        for (int i = 0; i < dynamics.Scenario.Stages.Length; i++)
        {
            var end = dynamics.Boundaries[i + 1];
            for (int j = 0; j < end.ModeNames.Length; j++)
            {
                var m = end.Moments(j);
                table.AddRow(j == 0 ? Markup.Escape(dynamics.Scenario.Stages[i].Name) : "", Markup.Escape(end.ModeNames[j]),
                    F(m.VarX), F(m.VarP), F(m.VarMin), F(m.Occupancy), m.SqueezingDb.ToString("F2"));
            }
        }
        return table;
    }

    private static string F(double v) => v.ToString("G4");
}

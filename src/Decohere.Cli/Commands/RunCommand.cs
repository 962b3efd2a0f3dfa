using System.CommandLine;
using Decohere.Diagnostics;
using Decohere.Engine;
using Decohere.Output;
using Decohere.Scenarios;
using Spectre.Console;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere run [SCENARIO] [--out DIR] [--seed N] [--quiet]</c>: evolve the covariances and write the results.</summary>
public static class RunCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create()
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var output = Cli.OutOption();
        var seed = new Option<long?>("--seed") { Description = "Random seed (overrides the scenario's seed)." };
        var quiet = Cli.QuietOption();
        var command = new Command("run", "Evolve the scenario's Gaussian state exactly and write covariance.parquet, summary.json and variance.png/.svg.")
        {
            scenario, output, seed, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            if (parse.GetValue(seed) is { } newSeed) s = s with { Seed = newSeed };
            string dir = Cli.OutputDirectory(parse.GetValue(output), s);
            var written = await Run(s, dir, cancel);
            bool isQuiet = parse.GetValue(quiet);
            if (!isQuiet)
            {
                Cli.Out.Write(StageTable(written.Dynamics));
                Cli.Warnings(written.Report.Warnings);
            }
            foreach (var path in written.Paths) Cli.Out.WriteLine(path);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>What a run produced.</summary>
    public sealed record RunOutput(Dynamics Dynamics, ScenarioReport Report, IReadOnlyList<string> Paths);

    /// <summary>Evolves a scenario and writes its outputs into <paramref name="directory"/>.</summary>
    public static async Task<RunOutput> Run(Scenario scenario, string directory, CancellationToken cancel)
    {
        var dynamics = Dynamics.Solve(scenario);
        var evolution = Evolution.Run(dynamics);
        var report = ScenarioReport.Of(dynamics);
        var metadata = RunMetadata.For(scenario);
        cancel.ThrowIfCancellationRequested();
        Directory.CreateDirectory(directory);
        string table = Path.Combine(directory, "covariance.parquet");
        string summary = Path.Combine(directory, "summary.json");
        string png = Path.Combine(directory, "variance.png"), svg = Path.Combine(directory, "variance.svg");
        await CovarianceTable.WriteAsync(evolution, table, metadata, cancel);
        SummaryJson.Write(SummaryJson.Build(dynamics, report, metadata), summary);
        cancel.ThrowIfCancellationRequested();
        VariancePlot.Save(evolution, png, svg);
        return new RunOutput(dynamics, report, [table, summary, png, svg]);
    }

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

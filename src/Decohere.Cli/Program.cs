using System.CommandLine;
using Decohere.Cli.Commands;

var root = new RootCommand(
    "Decohere: plan and analyse how a mechanical mode coupled to a cavity loses its squeezing. " +
    "Evolves Gaussian states exactly from a scenario file and writes Parquet tables, plots and summaries.");
foreach (var command in new[]
{
    RunCommand.Create(), CheckCommand.Create(), InitCommand.Create(),
    LifetimeCommand.Create(), ToleranceCommand.Create(),
    FitCommand.Create(), FitNoiseCommand.Create(),
    SweepCommand.Create(), MergeCommand.Create(),
})
    root.Subcommands.Add(command);
return await Cli.InvokeAsync(root, args);

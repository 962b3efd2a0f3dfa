using System.CommandLine;
using Decohere.Cli.Commands;

var root = new RootCommand(
    "Decohere: plan and analyse how a mechanical mode coupled to a cavity loses its squeezing. " +
    "Evolves Gaussian states exactly from a scenario file and writes Parquet tables, plots and summaries.");
var console = AppConsole.System();
foreach (var command in new[]
{
    RunCommand.Create(console), CheckCommand.Create(console), InitCommand.Create(console),
    LifetimeCommand.Create(console), ToleranceCommand.Create(console),
    FitCommand.Create(console), FitNoiseCommand.Create(console), JointFitCommand.Create(console),
    SweepCommand.Create(console), MergeCommand.Create(console),
    SpectrumCommand.Create(console), CoolingCommand.Create(console), RingdownCommand.Create(console),
    ModesCommand.Create(console), ReconstructCommand.Create(console),
})
    root.Subcommands.Add(command);
return await Cli.InvokeAsync(root, args, console);

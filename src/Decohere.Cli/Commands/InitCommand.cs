using System.CommandLine;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere init [FILE] [--force]</c>: write the annotated demo scenario to edit.</summary>
public static class InitCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var file = new Argument<FileInfo?>("file") { Description = "Where to write the scenario (default: scenario.yaml).", Arity = ArgumentArity.ZeroOrOne };
        var force = new Option<bool>("--force") { Description = "Overwrite an existing file." };
        var command = new Command("init", "Write the annotated demo scenario to a file to edit.") { file, force };
        command.SetAction((parse, _) => Cli.Guard(console, null, () =>
        {
            string path = parse.GetValue(file)?.FullName ?? "scenario.yaml";
            if (File.Exists(path) && !parse.GetValue(force))
                throw new InputException($"{path} exists; pass --force to overwrite it");
            AtomicFile.WriteAllText(path, ScenarioLoader.DemoText);
            console.Paths([path]);
            return Task.FromResult(Cli.Ok);
        }));
        return command;
    }
}

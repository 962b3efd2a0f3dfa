using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere merge DIR</c>: check that the part files of a sharded sweep hold every point once and write DIR/sweep.parquet and sweep.png.</summary>
public static class MergeCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create()
    {
        var directory = new Argument<DirectoryInfo>("dir") { Description = "Directory holding the part-K-of-N.parquet files of one sweep." };
        var quiet = Cli.QuietOption();
        var command = new Command("merge", "Merge the part files of a sharded sweep into sweep.parquet (the table an unsharded sweep writes) and sweep.png; names missing or duplicated points.")
        {
            directory, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(async () =>
        {
            string dir = parse.GetValue(directory)!.FullName;
            // A mistyped DIR is an error below, not a new empty folder.
            var owned = Directory.Exists(dir) ? OutputDirectory.Claim(dir, OutputSet.Sweep) : null;
            var result = await SweepMerge.MergeAsync(dir, cancel);
            var paths = new List<string> { result.Path };
            string png = Path.Combine(dir, "sweep.png");
            string scenarioName = File.Exists(result.Path) ? (await SweepTable.ReadMetadataAsync(result.Path, cancel)).GetValueOrDefault("decohere.scenario_name", "sweep") : "sweep";
            if (SweepPlot.Save(result.Description, result.Rows, scenarioName, png)) paths.Add(Path.GetFullPath(png));
            if (!parse.GetValue(quiet))
                Cli.Out.MarkupLineInterpolated($"merged {result.Parts.Count} part files: {result.Rows.Count} points, {result.Rows.Count(r => r.Error.Length > 0)} failed");
            owned?.Record(paths);
            foreach (var path in paths) Cli.Out.WriteLine(path);
            return Cli.Ok;
        }));
        return command;
    }
}

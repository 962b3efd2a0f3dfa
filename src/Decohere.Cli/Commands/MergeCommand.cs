using Spectre.Console;
using System.CommandLine;
using Decohere.IO;
using Decohere.Analyses.Sweeps;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere merge DIR</c>: check that the part files of a sharded sweep hold every point once and write DIR/sweep.parquet and sweep.png.</summary>
public static class MergeCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var directory = new Argument<DirectoryInfo>("dir") { Description = "Directory holding the part-K-of-N.parquet files of one sweep." };
        var quiet = Cli.QuietOption();
        var format = Cli.FormatOption();
        var command = new Command("merge", "Merge the part files of a sharded sweep into sweep.parquet (the table an unsharded sweep writes) and sweep.png; names missing or duplicated points.")
        {
            directory, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, null, async () =>
        {
            string dir = parse.GetValue(directory)!.FullName;
            // A mistyped DIR is an error below, not a new empty folder.
            var owned = Directory.Exists(dir) ? OutputDirectory.Claim(dir, OutputSet.Sweep) : null;
            var parts = await SweepTable.ReadPartsAsync(dir, cancel);
            var result = SweepMerge.Solve(parts, dir);
            var paths = Cli.WithCsv(await new SweepReport().WriteAsync(result, dir, cancel), CsvExport.WantsCsv(parse.GetValue(format)), cancel);
            owned?.Record(paths);
            if (!parse.GetValue(quiet))
                console.Out.MarkupLineInterpolated($"merged {parts.Count} part files: {result.Rows.Count} points, {result.Failed} failed");
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }
}

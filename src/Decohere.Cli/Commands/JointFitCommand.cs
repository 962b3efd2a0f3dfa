using Spectre.Console;
using System.CommandLine;
using System.Globalization;
using Decohere.Analyses.Fitting.Joint;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere joint-fit FILE [--out DIR] [--format parquet,csv] [--no-profiles] [--starts N] [--quiet]</c>: one maximum-likelihood
/// fit of several data sets with shared and per-data parameters.
/// </summary>
public static class JointFitCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var file = new Argument<FileInfo>("file") { Description = "Joint-fit file (YAML): parameters and data sets; paths in it are relative to it." };
        var starts = new Option<int>("--starts") { Description = "Optimiser starts (default 4).", DefaultValueFactory = _ => 4 };
        var noProfiles = new Option<bool>("--no-profiles") { Description = "Skip the profile-likelihood intervals (report Wald intervals from the standard errors)." };
        var output = new Option<DirectoryInfo?>("--out") { Description = "Output directory (default: results/<fit file name>/)." };
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("joint-fit",
            "Fit several data sets at once (heating curves, ring-downs, cooling curves) with shared and per-data parameters; " +
            "write joint-fit.json, joint-fit.parquet, joint-fit.png/.svg and joint-fit.md.")
        {
            file, starts, noProfiles, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var path = parse.GetValue(file)!;
            var problem = await JointFitLoader.LoadAsync(path.FullName, cancel);
            var settings = new JointFitSettings { Starts = parse.GetValue(starts), Profiles = !parse.GetValue(noProfiles) };
            var result = JointFitAnalysis.Solve(problem, settings, cancel);
            cancel.ThrowIfCancellationRequested();
            string dir = parse.GetValue(output)?.FullName ?? Path.Combine("results", problem.Name);
            var paths = await Cli.WriteOwned(new JointFitReport(), result, dir, OutputSet.JointFit, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                console.Out.Write(DataSets(result));
                console.Warnings(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string> { ["starts"] = "--starts" };

    private static string G(double v, string format = "G4") => double.IsFinite(v) ? v.ToString(format, CultureInfo.InvariantCulture) : "—";

    /// <summary>Each parameter with its interval and the data sets that read it.</summary>
    public static Table Table(JointFitResult r)
    {
        var table = new Table().Title($"[bold]{Markup.Escape(r.Problem.Name)}[/]: joint fit of {r.DataSets.Length} data sets");
        foreach (var h in new[] { "parameter", "value", "std. error", $"{r.Settings.Confidence * 100:G3}% interval", "unit", "data sets" })
            table.AddColumn(new TableColumn(h).RightAligned());
        foreach (var e in r.Parameters)
        {
            var q = e.Estimate;
            table.AddRow(Markup.Escape(e.Parameter.Name), G(q.Value), G(q.StandardError, "G2"), Markup.Escape($"{G(q.Low)} – {(q.HighReached ? G(q.High) : "∞")}"),
                Markup.Escape(e.Parameter.Unit), Markup.Escape(string.Join(", ", e.Parameter.DataSets) + (e.Parameter.Shared ? " (shared)" : "")));
        }
        foreach (var d in r.Derived)
        {
            var q = d.Estimate;
            table.AddRow(Markup.Escape($"bath temperature of {d.Mode} (from {d.Parameter})"), G(q.Value * 1e3), G(q.StandardError * 1e3, "G2"),
                Markup.Escape($"{G(q.Low * 1e3)} – {(q.HighReached ? G(q.High * 1e3) : "∞")}"), "mK", "");
        }
        return table;
    }

    /// <summary>Each data set's deviance and goodness of fit, and the total.</summary>
    public static Table DataSets(JointFitResult r)
    {
        var table = new Table();
        foreach (var h in new[] { "data set", "kind", "points", "deviance", "dof", "p" }) table.AddColumn(new TableColumn(h).RightAligned());
        foreach (var s in r.DataSets)
            table.AddRow(Markup.Escape(s.Name), s.Kind, s.Points.Length.ToString(CultureInfo.InvariantCulture), G(s.Deviance, "G5"), G(s.DegreesOfFreedom),
                s.PValue is { } p ? G(p, "G3") : "—");
        var g = r.Goodness;
        table.AddRow("[bold]total[/]", "", r.DataSets.Sum(s => s.Points.Length).ToString(CultureInfo.InvariantCulture), G(g.Deviance, "G5"),
            g.DegreesOfFreedom.ToString(CultureInfo.InvariantCulture), G(g.PValue, "G3"));
        return table;
    }
}

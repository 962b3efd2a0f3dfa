using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Lattices;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere reconstruct SCENARIO --data FILE [--no-onsite] [--next-nearest] [--confidence C] [--out DIR] [--quiet]</c>:
/// the coupling matrix of a lattice's cavities fitted to measured collective-mode frequencies and participations.
/// </summary>
public static class ReconstructCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: false);
        var data = new Option<FileInfo>("--data") { Description = "Measured modes: CSV or Parquet with mode_index, mode_frequency_hz, mode_frequency_err_hz [, site, participation, participation_err] (spectroscopy.parquet has them).", Required = true };
        var noOnsite = new Option<bool>("--no-onsite") { Description = "Keep the cavities' frequency offsets at the scenario's values instead of fitting them." };
        var nextNearest = new Option<bool>("--next-nearest") { Description = "Also fit a coupling between every pair of sites with a common neighbour." };
        var confidence = new Option<double>("--confidence") { Description = "Two-sided confidence of the intervals (default 0.95).", DefaultValueFactory = _ => 0.95 };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("reconstruct",
            "Fit the coupling matrix (on-site, nearest, next-nearest terms) of a lattice's cavities to measured mode frequencies and participations " +
            "by maximum likelihood; intervals and the combinations the data do not determine; writes reconstruct.json and reconstruct.parquet.")
        {
            scenario, data, noOnsite, nextNearest, confidence, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var measured = await ReconstructDataReader.ReadAsync(parse.GetValue(data)!.FullName, cancel);
            var settings = new ReconstructionSettings
            {
                OnSite = !parse.GetValue(noOnsite),
                NextNearest = parse.GetValue(nextNearest),
                Confidence = parse.GetValue(confidence),
            };
            var result = ReconstructionAnalysis.Solve(s, measured, settings);
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new ReconstructReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Reconstruct, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                console.Warnings(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string> { ["confidence"] = "--confidence" };

    private static string Mhz(double hz) => double.IsFinite(hz) ? $"{hz / 1e6:F4}" : "—";

    /// <summary>The fitted terms as a table.</summary>
    public static Table Table(ReconstructionResult r)
    {
        var table = new Table().Title($"coupling matrix of {Markup.Escape(r.Scenario.Name)} (MHz)");
        foreach (var h in new[] { "term", "fitted", "± stderr", "interval", "scenario" }) table.AddColumn(h);
        foreach (var t in r.Terms)
            table.AddRow(Markup.Escape(t.Name), Mhz(t.ValueHz), Mhz(t.StdErrHz), t.Identified ? Markup.Escape($"[{Mhz(t.LowHz)}, {Mhz(t.HighHz)}]") : "[red]undetermined[/]", Mhz(t.NominalHz));
        table.Caption($"χ² = {r.ChiSquare:G4} for {r.DegreesOfFreedom} degrees of freedom (p = {r.PValue:G3}), {r.Iterations} iterations, {r.Work.Elapsed.TotalSeconds:F2} s");
        return table;
    }
}

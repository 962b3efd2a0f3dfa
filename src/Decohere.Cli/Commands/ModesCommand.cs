using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Lattices;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere modes SCENARIO [--spectroscopy] [--photons N] [--averages N] [--seed N] [--out DIR] [--quiet]</c>: the
/// collective modes of a lattice's cavity network, and with <c>--spectroscopy</c> the drums' optomechanical damping under
/// each of them, as the full model gives it and as a lab would measure it.
/// </summary>
public static class ModesCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: false);
        var spectroscopy = new Option<bool>("--spectroscopy") { Description = "Also drive every collective mode with a red-sideband tone and simulate each drum's damping measurement (spectroscopy.parquet, spectroscopy.png)." };
        var photons = new Option<double>("--photons") { Description = "Photons in the driven collective mode (default 1e6).", DefaultValueFactory = _ => 1e6 };
        var averages = new Option<int>("--averages") { Description = "Averaged spectra per drum and mode (default 200).", DefaultValueFactory = _ => 200 };
        var points = new Option<int>("--points") { Description = "Frequency bins per drum spectrum, over ±4 linewidths (default 61).", DefaultValueFactory = _ => 61 };
        var frequencyError = new Option<string>("--frequency-error") { Description = "Standard error of each measured collective-mode frequency (default 20 kHz).", DefaultValueFactory = _ => "20 kHz" };
        var seed = new Option<long?>("--seed") { Description = "Seed of the simulated measurement (default: the scenario's)." };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("modes",
            "Collective modes of a lattice scenario's cavities (frequencies, linewidths, mode shapes, edge states, the chain's winding number " +
            "and Zak phase); writes modes.parquet, modes.json and modes.png; with --spectroscopy also the drums' damping under each mode.")
        {
            scenario, spectroscopy, photons, averages, points, frequencyError, seed, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            string directory = Cli.OutputDirectory(parse.GetValue(output), s);
            IReadOnlyList<string> paths;
            ModesResult modes;
            SpectroscopyResult? measured = null;
            if (parse.GetValue(spectroscopy))
            {
                var settings = new SpectroscopySettings
                {
                    Photons = parse.GetValue(photons),
                    Averages = parse.GetValue(averages),
                    Points = parse.GetValue(points),
                    FrequencyErrorHz = Cli.Quantity(parse.GetValue(frequencyError)!, Dimension.Frequency, "mode frequency error"),
                    Seed = parse.GetValue(seed),
                };
                measured = SpectroscopyAnalysis.Solve(s, settings);
                modes = measured.Modes;
                cancel.ThrowIfCancellationRequested();
                paths = await Cli.WriteOwned(new ModesSpectroscopyReport(), measured, directory, OutputSet.Modes, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            }
            else
            {
                modes = ModesAnalysis.Solve(s, new ModesSettings());
                cancel.ThrowIfCancellationRequested();
                paths = await Cli.WriteOwned(new ModesReport(), modes, directory, OutputSet.Modes, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            }
            if (!parse.GetValue(quiet))
            {
                PrintExpansion(console.Out, s);
                console.Out.Write(Table(modes));
                if (measured is not null) console.Out.MarkupLineInterpolated($"spectroscopy: {measured.Rows.Length} drum spectra ({modes.Modes.Length} modes × {modes.Lattice.Count} drums), {measured.Settings.Averages} averages each, in {measured.Work.Elapsed.TotalSeconds:F2} s");
                console.Warnings(modes.Warnings.Concat(measured?.Warnings ?? []));
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["photons"] = "--photons", ["averages"] = "--averages", ["points per spectrum"] = "--points", ["mode frequency error"] = "--frequency-error",
    };

    /// <summary>One line on what a lattice expanded to (sites, bonds, modes) and one per stage that drives a collective mode.</summary>
    public static void PrintExpansion(IAnsiConsole o, Scenario s)
    {
        var l = s.Lattice!;
        int next = l.Bonds.Count(b => b.Kind == BondKind.NextNearest);
        int boundary = l.Sites.Count(x => x.IsBoundary);
        o.MarkupLineInterpolated($"lattice: {l.Shape}; {boundary} of {l.Count} sites on the boundary; {l.Bonds.Length - next} nearest and {next} next-nearest bonds, {s.Modes.Length} modes ({l.Count} cavities cavity_j, {l.Count} drums drum_j)");
        foreach (var (stage, tone) in l.Drives.OrderBy(d => s.StageIndex(d.Key)))
            o.MarkupLineInterpolated($"stage {stage}: {tone.Sideband.ToString().ToLowerInvariant()} tone on collective mode {tone.ModeIndex}, {tone.Photons:G4} photons in the mode");
    }

    private static string Mhz(double hz) => $"{hz / 1e6:F4} MHz";

    /// <summary>The collective modes as a table.</summary>
    public static Table Table(ModesResult result)
    {
        var table = new Table().Title($"collective modes of {Markup.Escape(result.Scenario.Name)} (offset from {Quantity.Format(result.Lattice.CavityReferenceHz, Dimension.Frequency, 6)})");
        foreach (var h in new[] { "mode", "frequency", "linewidth", "edge weight", "IPR", "" }) table.AddColumn(h);
        foreach (var m in result.Modes)
            table.AddRow(m.Index.ToString(), Mhz(m.FrequencyHz), Quantity.Format(m.LinewidthHz, Dimension.Frequency), m.EdgeWeight.ToString("F3"),
                m.InverseParticipation.ToString("F3"), m.IsEdgeState ? "[red]edge state[/]" : "");
        if (result.Chain is { } c)
            table.Caption(Markup.Escape($"bulk: J₁ = {Mhz(c.IntraHz)}, J₂ = {Mhz(c.InterHz)}, band edges ±{Mhz(c.GapEdgeHz)} and ±{Mhz(c.OuterEdgeHz)}, " +
                $"winding number {c.Winding}, Zak phase {c.ZakPhaseRad / Math.PI:F3}π" +
                (c.DecayLengthCells is { } d ? $", edge-state decay length {d:F3} cells" : " (trivial phase: no edge states)")));
        return table;
    }
}

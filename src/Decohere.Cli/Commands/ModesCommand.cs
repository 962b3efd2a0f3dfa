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
        var output = Cli.OutOption();
        var quiet = Cli.QuietOption();
        var command = new Command("modes",
            "Collective modes of a lattice scenario's cavities (frequencies, linewidths, mode shapes, edge states, the chain's winding number " +
            "and Zak phase); writes modes.parquet, modes.json and modes.png.")
        {
            scenario, output, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, null, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var result = ModesAnalysis.Solve(s, new ModesSettings());
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new ModesReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Modes, cancel);
            if (!parse.GetValue(quiet))
            {
                PrintExpansion(console.Out, s);
                console.Out.Write(Table(result));
                console.Warnings(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>One line on what a lattice expanded to (sites, bonds, modes) and one per stage that drives a collective mode.</summary>
    public static void PrintExpansion(IAnsiConsole o, Scenario s)
    {
        var l = s.Lattice!;
        int next = l.Bonds.Count(b => b.Kind == BondKind.NextNearest);
        int boundary = l.Sites.Count(x => x.IsBoundary);
        o.MarkupLineInterpolated($"lattice: {l.Shape}: {l.Count} sites ({boundary} on the boundary), {l.Bonds.Length - next} nearest and {next} next-nearest bonds, {s.Modes.Length} modes ({l.Count} cavities cavity_j, {l.Count} drums drum_j)");
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

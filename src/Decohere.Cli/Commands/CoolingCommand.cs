using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Cooling;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere cooling SCENARIO [--cooperativity RANGE] [--stage NAME] [--tone K] [--phase-noise DBC_HZ] [--filter DB] [--g0 F]
/// [--data FILE] [--out DIR] [--quiet]</c>: steady occupancy against the cooling tone's cooperativity, its minimum and limit.
/// </summary>
public static class CoolingCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: false);
        var range = new Option<string>("--cooperativity")
        {
            Description = $"Cooperativities C = 4G²/(κγ), {Ranges.Forms} (default 0.1:1e5:61:log).",
            DefaultValueFactory = _ => "0.1:1e5:61:log",
        };
        var stage = new Option<string?>("--stage") { Description = "Stage of the cooling tone (default: the first stage with a red tone)." };
        var tone = new Option<int?>("--tone") { Description = "Index of the cooling tone in the stage (default: its first red tone)." };
        var phase = new Option<double?>("--phase-noise") { Description = "Single-sideband phase noise of the tone at the mechanical frequency, dBc/Hz (e.g. -150)." };
        var filter = new Option<string>("--filter") { Description = "Suppression of the phase noise by a filter, e.g. 30 dB (default 0 dB).", DefaultValueFactory = _ => "0 dB" };
        var g0 = new Option<string?>("--g0") { Description = "Single-photon coupling g0/2π, e.g. 100 Hz (needed with --phase-noise)." };
        var data = new Option<FileInfo?>("--data") { Description = "Measured occupancies (CSV or Parquet: cooperativity, occupancy, optional occupancy_err) to fit the heating law a·C^b to." };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("cooling",
            "Steady occupancy against the cooperativity of a red tone with drive heating and phase noise; the minimum, what limits it, " +
            "and a fit of the heating law to measured points; writes cooling.json, cooling.parquet and cooling.png.")
        {
            scenario, range, stage, tone, phase, filter, g0, data, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var settings = new CoolingSettings
            {
                Cooperativities = Ranges.Parse(parse.GetValue(range)!, v => Cli.Quantity(v, Dimension.Dimensionless, "cooperativity"), "cooperativity").Values,
                Stage = parse.GetValue(stage),
                Tone = parse.GetValue(tone),
                PhaseNoiseDbcPerHz = parse.GetValue(phase),
                FilterDb = Cli.Quantity(parse.GetValue(filter)!, Dimension.Decibel, "filter"),
                SinglePhotonCouplingHz = parse.GetValue(g0) is { } text ? Cli.Quantity(text, Dimension.Frequency, "single-photon coupling") : null,
            };
            var points = parse.GetValue(data) is { } file ? await LabDataReader.ReadCoolingAsync(file.FullName, cancel) : null;
            var result = CoolingAnalysis.Solve(s, settings, points);
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new CoolingReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Cooling, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                console.Notes(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["cooperativity"] = "--cooperativity", ["stage"] = "--stage", ["tone"] = "--tone", ["phase noise"] = "--phase-noise",
        ["filter"] = "--filter", ["single-photon coupling"] = "--g0",
    };

    /// <summary>The minimum and, with data, the fitted heating law.</summary>
    public static Table Table(CoolingResult result)
    {
        var m = result.Minimum;
        var table = new Table().Title($"[bold]{Markup.Escape(result.Scenario.Name)}[/]: cooling {Markup.Escape(result.Mechanical)} with tone {result.Tone} of stage '{Markup.Escape(result.Stage)}'");
        table.AddColumn("quantity");
        table.AddColumn(new TableColumn("value").RightAligned());
        table.AddRow("[bold]minimum occupancy[/]", $"{m.Occupancy:G5}");
        table.AddRow("at cooperativity", $"{m.Cooperativity:G5}{(result.MinimumAtEdge ? " (range edge)" : "")}");
        table.AddRow("coupling G/2π", Quantity.Format(m.CouplingHz, Dimension.Frequency));
        table.AddRow("cavity occupancy there", $"{m.CavityOccupancy:G4} (heating {m.CavityHeating:G3}, phase noise {m.PhaseNoise:G3})");
        table.AddRow("limited by", m.Limit);
        table.AddRow("shares", Markup.Escape($"thermal {m.Thermal:G3}, cavity bath {m.CavityBase:G3}, heating {m.HeatingShare:G3}, phase noise {m.PhaseNoiseShare:G3}, quantum {m.Quantum:G3}"));
        if (result.Fit is { } f)
        {
            table.AddRow("[bold]fitted heating[/]", Markup.Escape($"a = {f.Coefficient:G4} ± {f.CoefficientError:G2}, b = {f.Exponent:G4} ± {f.ExponentError:G2}"));
            table.AddRow(f.ErrorsGiven ? "χ² / dof" : "residual sum of squares / dof", $"{f.ChiSquare:G4} / {f.DegreesOfFreedom}");
        }
        return table;
    }
}

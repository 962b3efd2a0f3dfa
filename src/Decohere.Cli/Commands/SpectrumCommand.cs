using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Spectra;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere spectrum SCENARIO [--stage NAME] [--points N] [--span F] [--efficiency η] [--out DIR] [--quiet]</c>: stationary
/// noise spectra of a stage's modes and cavity outputs, sideband powers and the asymmetry reading.
/// </summary>
public static class SpectrumCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: false);
        var stage = new Option<string?>("--stage") { Description = "Stage whose steady state is analysed (default: the last stage with tones)." };
        var points = new Option<int>("--points") { Description = "Frequencies per side of zero, log-spaced (default 400).", DefaultValueFactory = _ => 400 };
        var span = new Option<string?>("--span") { Description = "Largest offset from each mode's frequency, e.g. 2 MHz (default: 1000 × the stage's fastest rate)." };
        var efficiency = new Option<double>("--efficiency") { Description = "Transmission from each cavity's port to the detector, in (0, 1] (default 1).", DefaultValueFactory = _ => 1.0 };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("spectrum",
            "Stationary noise spectra of every mode quadrature and cavity output in a stage, sideband powers and asymmetry; " +
            "writes spectrum.json, spectrum.parquet and spectrum.png.")
        {
            scenario, stage, points, span, efficiency, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var settings = new SpectrumSettings
            {
                Stage = parse.GetValue(stage),
                PointsPerSide = parse.GetValue(points),
                SpanHz = parse.GetValue(span) is { } text ? Cli.Quantity(text, Dimension.Frequency, "span") : null,
                Efficiency = parse.GetValue(efficiency),
            };
            var result = SpectrumAnalysis.Solve(s, settings);
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new SpectrumReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Spectrum, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                if (result.Sidebands.Length > 0) console.Out.Write(SidebandTable(result));
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
        ["stage"] = "--stage", ["points"] = "--points", ["span"] = "--span", ["efficiency"] = "--efficiency",
    };

    /// <summary>Per mode: Lyapunov variances beside the integrals of the spectra.</summary>
    public static Table Table(SpectrumResult result)
    {
        var table = new Table().Title($"[bold]{Markup.Escape(result.Scenario.Name)}[/]: spectra in stage '{Markup.Escape(result.Stage)}' ({result.FrequenciesHz.Length} frequencies)");
        foreach (var h in new[] { "mode", "var_x (Lyapunov)", "∫ s_xx df", "var_p (Lyapunov)", "∫ s_pp df", "occupancy", "∫ s_normal df" })
            table.AddColumn(new TableColumn(h).RightAligned());
        foreach (var m in result.Modes)
            table.AddRow(Markup.Escape(m.Mode), $"{m.VarX:G6}", $"{m.IntegralSxx:G6}", $"{m.VarP:G6}", $"{m.IntegralSpp:G6}", $"{m.Occupancy:G6}", $"{m.IntegralNormal:G6}");
        return table;
    }

    /// <summary>Sideband powers and the asymmetry reading.</summary>
    public static Table SidebandTable(SpectrumResult result)
    {
        var table = new Table().Title("sidebands (each tone probing its cavity alone)");
        foreach (var h in new[] { "tone", "sideband", "mechanical", "Γ = 4G²/κ (s⁻¹)", "power (photons/s)", "n while probing" })
            table.AddColumn(new TableColumn(h).RightAligned());
        foreach (var s in result.Sidebands)
            table.AddRow($"{s.Tone}", s.Sideband == Sideband.Red ? "red" : "blue", Markup.Escape(s.Mechanical), $"{s.RatePerS:G4}", $"{s.PowerPerS:G5}", $"{s.MechanicalOccupancy:G5}");
        foreach (var a in result.Asymmetries)
            table.AddRow("", "asymmetry", Markup.Escape(a.Mechanical), $"ratio {a.Ratio:G5}",
                a.NaiveOccupancy is { } n ? $"naive n = {n:G5}" : "naive n: —", $"true n = {a.TrueOccupancy:G5}");
        return table;
    }
}

using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Ringdown;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere ringdown --data FILE [--frequency F] [--sigma S] [--time-unit U] [--confidence C] [--out DIR] [--quiet]</c>:
/// γ, Q and the thermal floor of a measured ring-down.
/// </summary>
public static class RingdownCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var data = new Option<FileInfo>("--data") { Description = "Ring-down (CSV or Parquet): time_s and amplitude (optional sigma) or energy.", Required = true };
        var frequency = new Option<string?>("--frequency") { Description = "Resonator frequency, e.g. 4 MHz, for Q = 2πf/γ." };
        var sigma = new Option<double?>("--sigma") { Description = "Gaussian noise σ of every amplitude, in data units (default: a sigma column, else fitted)." };
        var unit = new Option<string?>("--time-unit") { Description = "Unit of the time column (s, ms, us, ns; default s)." };
        var confidence = new Option<double>("--confidence") { Description = "Confidence of the intervals (default 0.95).", DefaultValueFactory = _ => 0.95 };
        var output = new Option<DirectoryInfo?>("--out") { Description = "Output directory (default: results/ringdown-<data file name>/)." };
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var command = new Command("ringdown",
            "Fit a ring-down (amplitude or energy against time) with the exact likelihood of its noise: γ, linewidth, Q, thermal floor, " +
            "profile-likelihood intervals; writes ringdown.json, ringdown.parquet and ringdown.png.")
        {
            data, frequency, sigma, unit, confidence, output, format, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var file = parse.GetValue(data)!;
            var settings = new RingdownSettings
            {
                FrequencyHz = parse.GetValue(frequency) is { } f ? Cli.Quantity(f, Dimension.Frequency, "frequency") : null,
                Confidence = parse.GetValue(confidence),
            };
            double scale = parse.GetValue(unit) is { } u ? Cli.Quantity("1 " + u, Dimension.Time, "time unit") : 1;
            var points = await LabDataReader.ReadRingdownAsync(file.FullName, scale, parse.GetValue(sigma), cancel);
            var result = RingdownAnalysis.Solve(points, settings);
            cancel.ThrowIfCancellationRequested();
            string dir = parse.GetValue(output)?.FullName ?? Path.Combine("results", "ringdown-" + Path.GetFileNameWithoutExtension(file.Name));
            var paths = await Cli.WriteOwned(new RingdownReport(), result, dir, OutputSet.Ringdown, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
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
        ["frequency"] = "--frequency", ["confidence"] = "--confidence", ["time unit"] = "--time-unit", ["sigma"] = "--sigma",
    };

    private static string Interval(RingdownEstimate e, string format) => Markup.Escape(
        $"{e.Value.ToString(format)} ± {e.StandardError:G2}  [{(e.Low is { } lo ? lo.ToString(format) : "—")}, {(e.High is { } hi ? hi.ToString(format) : "—")}]");

    /// <summary>The fitted values with their intervals.</summary>
    public static Table Table(RingdownResult r)
    {
        var table = new Table().Title($"[bold]{Markup.Escape(r.Data.Source)}[/]: ring-down ({r.Data.TimesS.Length} points, {(r.Data.Kind == RingdownKind.Energy ? "energy, exponential noise" : "amplitude, Gaussian noise")})");
        table.AddColumn("quantity");
        table.AddColumn(new TableColumn(Markup.Escape($"value ± stderr [{r.Settings.Confidence:P0} interval]")).RightAligned());
        table.AddRow("[bold]energy decay rate γ (s⁻¹)[/]", Interval(r.DecayRate, "G5"));
        table.AddRow("linewidth γ/2π (Hz)", Interval(r.LinewidthHz, "G5"));
        if (r.QualityFactor is { } q) table.AddRow("[bold]Q = 2πf/γ[/]", Interval(q, "G5"));
        table.AddRow("initial", Interval(r.Initial, "G4"));
        table.AddRow("thermal floor", Interval(r.Floor, "G4"));
        table.AddRow("deviance / dof", $"{r.Deviance:G4} / {r.DegreesOfFreedom}{(r.PValue is { } p ? $" (p = {p:G3})" : "")}");
        return table;
    }
}

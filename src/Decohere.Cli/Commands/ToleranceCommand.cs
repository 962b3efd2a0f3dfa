using Spectre.Console;
using System.CommandLine;
using System.Globalization;
using Decohere.IO;
using Decohere.Analyses;
using Decohere.Analyses.Tolerance;
using Decohere.Core;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere tolerance [SCENARIO] --added-noise RANGE --shots LIST [--delay T] [--power P] [--confidence C]
/// [--calibration-uncertainty σ] [--threshold DB] [--after STAGE] [--draws N] [--out DIR] [--quiet]</c>:
/// which added noise and how many shots resolve the squeezing at a delay.
/// </summary>
public static class ToleranceCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var noise = new Option<string>("--added-noise")
        {
            Description = $"Added noise values in quanta per quadrature, input-referred, as {Ranges.Forms} (e.g. 0:3:+0.25, 13 values from 0 to 3).",
            Required = true,
        };
        var shots = new Option<string>("--shots") { Description = "Shot counts, comma-separated (e.g. 500,2000,1e4) or FROM:TO:+STEP.", Required = true };
        var delay = new Option<string>("--delay")
        {
            Description = "Delay after the end of the last driven stage (or --after STAGE), e.g. 2 ms (default 0).",
            DefaultValueFactory = _ => "0 s",
        };
        var power = new Option<double>("--power") { Description = "Target power (default 0.9).", DefaultValueFactory = _ => 0.9 };
        var confidence = new Option<double>("--confidence") { Description = "One-sided confidence of the upper bound (default 0.95).", DefaultValueFactory = _ => 0.95 };
        var calibration = new Option<double?>("--calibration-uncertainty")
        {
            Description = "σ (quanta) of the calibrated added noise the lab subtracts; adds Monte Carlo columns power_mc, power_mc_err.",
        };
        var threshold = new Option<string>("--threshold") { Description = "Squeezing threshold in dB (default 0 dB).", DefaultValueFactory = _ => "0 dB" };
        var after = new Option<string?>("--after") { Description = "Count the delay from the end of this stage (default: the last stage with tones)." };
        var draws = new Option<int>("--draws") { Description = "Monte Carlo draws per grid point (default 4000).", DefaultValueFactory = _ => 4000 };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var limits = new Cli.LimitOptions();
        var measured = new MeasuredOptions();
        var command = new Command("tolerance",
            "Power to resolve the squeezing at a delay over a grid of added noise and shots; the largest tolerable added noise and " +
            "the fewest shots at a target power; writes tolerance.parquet, tolerance.json and tolerance.png/.svg.")
        {
            scenario, noise, shots, delay, power, confidence, calibration, threshold, after, draws, output, format, quiet,
        };
        foreach (var option in limits.All.Concat(measured.All)) command.Options.Add(option);
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var values = measured.Read(parse);
            // A calibrated added noise brings its own uncertainty unless one is given.
            double? calibrated = values.Values.FirstOrDefault(v => v.Path == "readout.added_noise" && double.IsFinite(v.Sd))?.Sd;
            var settings = new ToleranceSettings
            {
                AddedNoise = ToleranceSettings.ParseAddedNoise(parse.GetValue(noise)!),
                Shots = ToleranceSettings.ParseShots(parse.GetValue(shots)!),
                DelayS = Cli.Quantity(parse.GetValue(delay)!, Dimension.Time, "delay"),
                TargetPower = parse.GetValue(power),
                Confidence = parse.GetValue(confidence),
                CalibrationUncertainty = parse.GetValue(calibration) ?? calibrated,
                ThresholdDb = Cli.Quantity(parse.GetValue(threshold)!, Dimension.Decibel, "threshold"),
                AfterStage = parse.GetValue(after),
                Draws = parse.GetValue(draws),
            };
            settings.Validate();
            ResourceEstimates.Tolerance(settings).Enforce(limits.Read(parse));
            var s = values.Apply(Cli.Load(parse.GetValue(scenario)));
            var result = ToleranceAnalysis.Solve(s, settings, cancel);
            var paths = await Cli.WriteOwned(new ToleranceReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Tolerance, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(PowerTable(result));
                console.Out.Write(NeedsTable(result));
                console.Notes(result.Notes);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    private static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["added noise"] = "--added-noise", ["shots"] = "--shots", ["delay"] = "--delay", ["target power"] = "--power",
        ["confidence"] = "--confidence", ["calibration uncertainty"] = "--calibration-uncertainty", ["threshold"] = "--threshold",
        ["reference stage"] = "--after", ["draws"] = "--draws",
    };

    /// <summary>Power per added noise (rows, at most 25 shown) and shots (columns).</summary>
    public static Table PowerTable(ToleranceResult r)
    {
        var s = r.Settings;
        var table = new Table().Title($"[bold]{Markup.Escape(r.Scenario.Name)}[/]: power to resolve {r.SqueezingDb:F2} dB of {Markup.Escape(r.Mode)} " +
                                      $"at {Markup.Escape(Quantity.Format(s.DelayS, Dimension.Time))} after the {Markup.Escape(r.Reference)}");
        table.AddColumn(new TableColumn("added noise").RightAligned());
        foreach (var n in s.Shots) table.AddColumn(new TableColumn($"{n} shots").RightAligned());
        int rows = s.AddedNoise.Length, stride = Math.Max(1, (int)Math.Ceiling(rows / 25.0));
        for (int i = 0; i < rows; i += stride)
        {
            var cells = new List<string> { s.AddedNoise[i].ToString("G4", CultureInfo.InvariantCulture) };
            for (int j = 0; j < s.Shots.Length; j++)
            {
                var p = r.Points[i * s.Shots.Length + j];
                string colour = p.Power >= s.TargetPower ? "green" : "red";
                string cell = $"[{colour}]{p.Power:F3}[/]";
                if (p.PowerMc is { } mc) cell += $" (mc {mc:F3}±{p.PowerMcErr:F3})";
                cells.Add(cell);
            }
            table.AddRow(cells.ToArray());
        }
        if (stride > 1) table.Caption($"every {stride}th added-noise value shown; all are in tolerance.parquet");
        return table;
    }

    /// <summary>The largest tolerable added noise per shot count and the fewest shots per added noise at the target power.</summary>
    public static Spectre.Console.Rendering.IRenderable NeedsTable(ToleranceResult r)
    {
        var table = new Table().Title($"at target power {r.Settings.TargetPower:G3}");
        table.AddColumn(new TableColumn("shots").RightAligned());
        table.AddColumn(new TableColumn("largest added noise").RightAligned());
        foreach (var (shots, n) in r.LargestAddedNoise)
            table.AddRow(shots.ToString(CultureInfo.InvariantCulture), n is { } v ? v.ToString("G4", CultureInfo.InvariantCulture) : "[red]none[/]");
        var fewest = new Table();
        fewest.AddColumn(new TableColumn("added noise").RightAligned());
        fewest.AddColumn(new TableColumn("fewest shots").RightAligned());
        int rows = r.FewestShots.Length, stride = Math.Max(1, (int)Math.Ceiling(rows / 25.0));
        for (int i = 0; i < rows; i += stride)
            fewest.AddRow(r.FewestShots[i].AddedNoise.ToString("G4", CultureInfo.InvariantCulture),
                r.FewestShots[i].Shots is { } k ? k.ToString(CultureInfo.InvariantCulture) : "[red]more than 1e9[/]");
        var grid = new Grid();
        grid.AddColumn();
        grid.AddColumn();
        grid.AddRow(table, fewest);
        return grid;
    }
}

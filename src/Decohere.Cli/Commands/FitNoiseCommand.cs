using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Calibration;
using Decohere.IO;
using Decohere.Model.Readouts;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere fit-noise --data FILE [--column NAME=FILE_COLUMN]... [--out DIR]</c>: gain and added-noise calibration against known occupancies.</summary>
public static class FitNoiseCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var data = FitCommand.DataOption("Calibration data, CSV or Parquet, with columns occupancy (prepared, quanta), var_i, var_q (measured) and shots.");
        var columns = FitCommand.ColumnOption();
        var output = new Option<DirectoryInfo?>("--out") { Description = "Output directory (default: results/fit-noise/)." };
        var quiet = Cli.QuietOption();
        var limits = new Cli.LimitOptions();
        var scenario = new Option<FileInfo?>("--scenario") { Description = "Scenario whose readout chain predicts the added noise; the calibration is compared with it." };
        var command = new Command("fit-noise", "Calibrate the readout: fit var = gain·(occupancy + ½) + added_noise to variances measured at known occupancies; write fit-noise.json and fit-noise.png/.svg.")
        {
            data, columns, scenario, output, quiet,
        };
        foreach (var option in limits.All) command.Options.Add(option);
        command.SetAction((parse, cancel) => Cli.Guard(console, FitCommand.Flags, async () =>
        {
            var options = DataOptions.Parse(parse.GetValue(columns) ?? [], null) with { Limits = limits.Read(parse) };
            var file = parse.GetValue(data)!;
            var points = await FitDataReader.ReadCalibrationAsync(file.FullName, options, cancel);
            var expected = parse.GetValue(scenario) is { } sf ? ReadoutChains.For(Cli.Load(sf)) : null;
            var result = CalibrationAnalysis.Solve(points, file.Name, new CalibrationSettings { Expected = expected }, cancel);
            string dir = parse.GetValue(output)?.FullName ?? Path.Combine("results", "fit-noise");
            var paths = await Cli.WriteOwned(new CalibrationReport(), result, dir, OutputSet.FitNoise, cancel);
            if (!parse.GetValue(quiet))
            {
                var table = new Table().Title($"[bold]noise calibration[/]: {Markup.Escape(file.Name)} ({points.Length} points)");
                foreach (var h in new[] { "quantity", "value", "std. error", $"{result.Confidence:P0} interval" })
                    table.AddColumn(new TableColumn(h).RightAligned());
                foreach (var e in new[] { result.Gain, result.AddedNoise, result.AddedNoiseInputReferred })
                    table.AddRow(Markup.Escape(e.Name), e.Value.ToString("G5"), e.StandardError.ToString("G3"),
                        $"{(e.LowReached ? e.Low.ToString("G5") : "(0)")} – {(e.HighReached ? e.High.ToString("G5") : "∞")}");
                console.Out.Write(table);
                console.Out.MarkupLineInterpolated($"deviance {result.Goodness.Deviance:G5} for {result.Goodness.DegreesOfFreedom} degrees of freedom, p = {result.Goodness.PValue:G3}; correlation(gain, added_noise) = {result.Correlation:F3}");
                if (expected is not null)
                    console.Out.MarkupLineInterpolated($"the scenario's readout ({expected.Method}) predicts {expected.AddedNoise:G4} quanta per quadrature, input-referred");
                console.Warnings(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }
}

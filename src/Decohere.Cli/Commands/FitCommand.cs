using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Statistics;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere fit SCENARIO --data FILE [--free LIST] [--column NAME=FILE_COLUMN]... [--delay-unit UNIT] [--out DIR]</c>:
/// maximum-likelihood fit of scenario parameters to measured shots, variances or occupancies.
/// </summary>
public static class FitCommand
{
    /// <summary>--data FILE (shared with fit-noise).</summary>
    public static Option<FileInfo> DataOption(string description) => new("--data") { Description = description, Required = true };

    /// <summary>--column NAME=FILE_COLUMN, repeatable (shared with fit-noise).</summary>
    public static Option<string[]> ColumnOption() => new("--column")
    {
        Description = "Map an expected column to the file's name, e.g. --column delay_s=t_ms --column var_i=vx (repeatable). " +
            "Expected names: " + string.Join(", ", DataOptions.KnownColumns) + ".",
        Arity = ArgumentArity.ZeroOrMore,
    };

    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: false);
        var data = DataOption("Measured data, CSV (header row, comma-separated) or Parquet, with columns delay_s, i, q (shots); " +
            "delay_s, var_i, var_q, shots [, cov_iq] (variances); or delay_s, occupancy, occupancy_err (occupancies).");
        var free = new Option<string[]>("--free")
        {
            Description = "Free parameters by scenario path, comma-separated or repeated (default: the readout mode's bath.occupancy and " +
                "linewidth, plus readout.added_noise for shots or variances). E.g. modes.drum.bath.temperature,modes.drum.linewidth.",
            Arity = ArgumentArity.ZeroOrMore,
        };
        var columns = ColumnOption();
        var delayUnit = new Option<string?>("--delay-unit") { Description = "Unit of the delay column: s (default), ms, us or ns." };
        var mode = new Option<string?>("--mode") { Description = "With a mode column in shot data: the mode's rows to keep (default: the readout mode)." };
        var starts = new Option<int>("--starts") { Description = "Optimiser starts (default 4).", DefaultValueFactory = _ => 4 };
        var noProfiles = new Option<bool>("--no-profiles") { Description = "Skip the profile-likelihood intervals (report Wald intervals from the standard errors)." };
        var prior = new Option<string[]>("--prior")
        {
            Description = "Prior on a parameter path: PATH=MEAN±SD (Gaussian, also MEAN+-SD) or PATH=LOW..HIGH (bounded), in the path's units; frees the path. Repeatable.",
            AllowMultipleArgumentsPerToken = false,
        };
        var fixedValue = new Option<string[]>("--fixed")
        {
            Description = "A parameter held fixed at a value known to ± SD: PATH=VALUE±SD (also VALUE+-SD), in the path's units. The fit uses VALUE and " +
                "reports how far a 1σ error in it moves each estimate (a warning when the shift is ≥ 0.2 standard errors). Repeatable.",
            AllowMultipleArgumentsPerToken = false,
        };
        var calibration = new Option<FileInfo?>("--calibration")
        {
            Description = "fit-noise.json of a noise calibration: the data are in measured units; convert them with its gain and take its added noise as a prior.",
        };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var limits = new Cli.LimitOptions();
        var command = new Command("fit", "Fit scenario parameters (bath, damping, added noise) to measured data by maximum likelihood; write fit.json, fit.parquet, fit.png/.svg and the results table fit.md/.tex.")
        {
            scenario, data, free, columns, delayUnit, mode, starts, noProfiles, prior, fixedValue, calibration, output, format, quiet,
        };
        foreach (var option in limits.All) command.Options.Add(option);
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var options = DataOptions.Parse(parse.GetValue(columns) ?? [], parse.GetValue(delayUnit), parse.GetValue(mode)) with { Limits = limits.Read(parse) };
            var fitData = await FitDataReader.ReadAsync(parse.GetValue(data)!.FullName, s, options, cancel);
            var settings = new FitSettings
            {
                Free = [.. (parse.GetValue(free) ?? []).SelectMany(f => f.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))],
                Starts = parse.GetValue(starts),
                Profiles = !parse.GetValue(noProfiles),
                Priors = [.. (parse.GetValue(prior) ?? []).Select(text => FitPrior.Parse(text, s))],
                Fixed = [.. (parse.GetValue(fixedValue) ?? []).Select(text => FitPrior.Parse(text, s, "fixed"))],
                Calibration = parse.GetValue(calibration) is { } file ? CalibrationFile.Read(file.FullName) : null,
            };
            var result = FitAnalysis.Solve(s, settings, fitData, cancel);
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new FitReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Fit, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                var g = result.Goodness;
                console.Out.MarkupLineInterpolated($"deviance {g.Deviance:G5} for {g.DegreesOfFreedom} degrees of freedom: reduced χ² {g.ReducedChiSquare:G4}, p = {g.PValue:G3} ({result.Likelihood})");
                console.Warnings(result.Warnings);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings the fit commands' options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["free parameters"] = "--free", ["starts"] = "--starts", ["column mapping"] = "--column", ["delay unit"] = "--delay-unit",
        ["data file"] = "--data", ["prior"] = "--prior", ["fixed"] = "--fixed", ["calibration"] = "--calibration",
    };

    /// <summary>The terminal table: each free parameter, derived quantity and identified combination, named and scaled as in fit.md.</summary>
    public static Table Table(FitResult fit)
    {
        var table = new Table().Title($"[bold]{Markup.Escape(fit.Scenario.Name)}[/]: fit to {Markup.Escape(fit.Data.Source)} " +
            $"({fit.Data.Delays.Length} delays, {fit.Data.Shape.ToString().ToLowerInvariant()})");
        foreach (var h in new[] { "quantity", "value", "std. error", $"{fit.Confidence * 100:G3}% interval", "unit", "method" })
            table.AddColumn(new TableColumn(h).RightAligned());
        foreach (var r in FitTables.Rows(fit))
            table.AddRow(Markup.Escape(r.Quantity), r.Value, r.StandardError, Markup.Escape($"{r.Low} – {r.High}"), Markup.Escape(r.Unit), Markup.Escape(r.Method));
        return table;
    }
}

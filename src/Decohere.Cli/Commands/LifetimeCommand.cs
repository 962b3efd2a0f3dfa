using Spectre.Console;
using System.CommandLine;
using Decohere.IO;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere lifetime [SCENARIO] [--after STAGE] [--threshold DB] [--confidence C] [--out DIR] [--quiet]</c>:
/// how long the squeezing lives after the drives stop, physically and as the scenario's readout sees it.
/// </summary>
public static class LifetimeCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var after = new Option<string?>("--after") { Description = "Count delays from the end of this stage (default: the last stage with tones)." };
        var threshold = new Option<string>("--threshold")
        {
            Description = "Squeezing threshold in dB below zero-point (default 0 dB, i.e. var_min = 0.5; var = 0.5·10^(−dB/10)).",
            DefaultValueFactory = _ => "0 dB",
        };
        var confidence = new Option<double>("--confidence")
        {
            Description = "One-sided confidence of the χ² upper bound on the inferred variance (default 0.95).",
            DefaultValueFactory = _ => 0.95,
        };
        var output = Cli.OutOption();
        var format = Cli.FormatOption();
        var quiet = Cli.QuietOption();
        var measured = new MeasuredOptions();
        var command = new Command("lifetime",
            "Physical and observable squeezing lifetime after the drives stop, the single-mode estimate, sensitivities; " +
            "writes lifetime.json, lifetime.parquet and lifetime.png/.svg.")
        {
            scenario, after, threshold, confidence, output, format, quiet,
        };
        foreach (var option in measured.All) command.Options.Add(option);
        command.SetAction((parse, cancel) => Cli.Guard(console, Flags, async () =>
        {
            var values = measured.Read(parse);
            var s = values.Apply(Cli.Load(parse.GetValue(scenario)));
            var settings = new LifetimeSettings
            {
                Measured = values,
                AfterStage = parse.GetValue(after),
                ThresholdDb = Cli.Quantity(parse.GetValue(threshold)!, Dimension.Decibel, "threshold"),
                Confidence = parse.GetValue(confidence),
            };
            var result = LifetimeAnalysis.Solve(s, settings);
            cancel.ThrowIfCancellationRequested();
            var paths = await Cli.WriteOwned(new LifetimeReport(), result, Cli.OutputDirectory(parse.GetValue(output), s), OutputSet.Lifetime, cancel, CsvExport.WantsCsv(parse.GetValue(format)));
            if (!parse.GetValue(quiet))
            {
                console.Out.Write(Table(result));
                if (result.Sensitivities.Length > 0) console.Out.Write(SensitivityTable(result));
                console.Notes(result.Core.Notes);
            }
            console.Paths(paths);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>The library's names of the settings this command's options set.</summary>
    internal static readonly IReadOnlyDictionary<string, string> Flags = new Dictionary<string, string>
    {
        ["reference stage"] = "--after", ["threshold"] = "--threshold", ["confidence"] = "--confidence",
    };

    private static string Time(double? s) => s is { } v && double.IsFinite(v) ? Quantity.Format(v, Dimension.Time) : "—";

    /// <summary>The lifetimes as a table.</summary>
    public static Table Table(LifetimeResult report)
    {
        var c = report.Core;
        var table = new Table().Title($"[bold]{Markup.Escape(report.Scenario.Name)}[/]: squeezing lifetime of {Markup.Escape(c.Mode)} after the {Markup.Escape(c.Reference)}");
        table.AddColumn("quantity");
        table.AddColumn(new TableColumn("value").RightAligned());
        table.AddColumn("how");
        table.AddRow("squeezing at the reference", $"{c.InitialSqueezingDb:F3} dB", $"var_min = {c.InitialVarMin:G6}");
        table.AddRow("threshold", $"{c.ThresholdDb:G4} dB", $"var_min = {c.ThresholdVariance:G6}");
        table.AddRow("[bold]physical lifetime[/]", Time(c.PhysicalLifetimeS),
            Markup.Escape(c.PhysicalStatus == LifetimeStatus.Crossed ? "root of var_min − threshold on the exact propagation" + (c.PhysicalPastScenarioEnd ? " (past the scenario's end)" : "") : LifetimeReport.Status(c.PhysicalStatus)));
        table.AddRow("single-mode t*", Time(c.ApproximateLifetimeS), Markup.Escape($"(1/γ)·ln[(n_th+½−V₀)/(n_th+½−V_thr)], γ = {c.DecayRate:G4} s⁻¹, n_th = {c.BathOccupancy:G4}"));
        table.AddRow("ratio physical / t*", c.Ratio is { } ratio ? ratio.ToString("F6") : "—", "");
        string readout = c.Readout is { } r ? $"n_add = {r.AddedNoise:G4}, {r.Shots} shots, {r.Confidence:P0} upper bound; power 0.5" : "no readout";
        table.AddRow("[bold]observable lifetime[/]",
            c.ObservableStatus == LifetimeStatus.NeverResolved ? "[red]never resolved[/]" : Time(c.ObservableLifetimeS), Markup.Escape(readout));
        if (c.PowerAtStart is { } p0) table.AddRow("power at the reference", p0.ToString("F4"), "");
        if (!report.Settings.Measured.Values.IsEmpty)
        {
            string from = string.Join(", ", report.Settings.Measured.Values.Select(v => v.Path));
            table.AddRow("± from measured values", $"{Time(report.PhysicalLifetimeSd)} / {Time(report.ObservableLifetimeSd)}",
                Markup.Escape($"physical / observable, 1σ from the errors of {from} (with their correlations)"));
        }
        return table;
    }

    /// <summary>The sensitivities as a table.</summary>
    public static Table SensitivityTable(LifetimeResult report)
    {
        var table = new Table().Title("sensitivities (finite differences on the exact model)");
        foreach (var h in new[] { "parameter", "change", "Δ physical", "Δ observable" }) table.AddColumn(h);
        foreach (var s in report.Sensitivities)
            table.AddRow(Markup.Escape(s.Parameter), Markup.Escape(s.Change), Signed(s.PhysicalChangeS), Signed(s.ObservableChangeS));
        return table;
    }

    private static string Signed(double? s) => s is { } v && double.IsFinite(v) ? v == 0 ? "0" : (v > 0 ? "+" : "−") + Quantity.Format(Math.Abs(v), Dimension.Time) : "—";
}

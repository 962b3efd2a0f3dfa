using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Lifetime;
using Decohere.Analyses.Tolerance;
using Decohere.Core;
using Decohere.IO;
using Decohere.Numerics;
using Decohere.Reports;
using Decohere.Statistics;

namespace Decohere.Cli.Commands;

/// <summary>
/// <c>decohere lifetime [SCENARIO] [--after STAGE] [--threshold DB] [--confidence C] [--out DIR] [--quiet]</c>:
/// how long the squeezing lives after the drives stop, physically and as the scenario's readout sees it.
/// </summary>
public static class LifetimeCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create()
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
        var quiet = Cli.QuietOption();
        var command = new Command("lifetime",
            "Physical and observable squeezing lifetime after the drives stop, the single-mode estimate, sensitivities; " +
            "writes lifetime.json, lifetime.parquet and lifetime.png.")
        {
            scenario, after, threshold, confidence, output, quiet,
        };
        command.SetAction((parse, cancel) => Cli.Guard(async () =>
        {
            var s = Cli.Load(parse.GetValue(scenario));
            var settings = new LifetimeSettings
            {
                AfterStage = parse.GetValue(after),
                ThresholdDb = ParseQuantity(parse.GetValue(threshold)!, Dimension.Decibel, "--threshold"),
                Confidence = parse.GetValue(confidence),
            };
            var report = LifetimeAnalysis.Run(s, settings);
            cancel.ThrowIfCancellationRequested();
            var paths = await LifetimeOutput.WriteAsync(report, Cli.OutputDirectory(parse.GetValue(output), s), cancel);
            if (!parse.GetValue(quiet))
            {
                Cli.Out.Write(Table(report));
                if (report.Sensitivities.Length > 0) Cli.Out.Write(SensitivityTable(report));
                foreach (var note in report.Core.Notes) Cli.Out.MarkupLineInterpolated($"[yellow]note:[/] {note}");
            }
            foreach (var path in paths) Cli.Out.WriteLine(path);
            return Cli.Ok;
        }));
        return command;
    }

    /// <summary>Parses an option value with units; the error names the option.</summary>
    /// <exception cref="InputException">Not a number of the dimension.</exception>
    internal static double ParseQuantity(string text, Dimension dimension, string option) =>
        Quantity.TryParse(text, dimension, out double v, out string? error) ? v : throw new InputException($"{option}: {error}");

    private static string Time(double? s) => s is { } v && double.IsFinite(v) ? Quantity.Format(v, Dimension.Time) : "—";

    /// <summary>The lifetimes as a table.</summary>
    public static Table Table(LifetimeReport report)
    {
        var c = report.Core;
        var table = new Table().Title($"[bold]{Markup.Escape(report.Scenario.Name)}[/]: squeezing lifetime of {Markup.Escape(c.Mode)} after the {Markup.Escape(c.Reference)}");
        table.AddColumn("quantity");
        table.AddColumn(new TableColumn("value").RightAligned());
        table.AddColumn("how");
        table.AddRow("squeezing at the reference", $"{c.InitialSqueezingDb:F3} dB", $"var_min = {c.InitialVarMin:G6}");
        table.AddRow("threshold", $"{c.ThresholdDb:G4} dB", $"var_min = {c.ThresholdVariance:G6}");
        table.AddRow("[bold]physical lifetime[/]", Time(c.PhysicalLifetimeS),
            Markup.Escape(c.PhysicalStatus == LifetimeStatus.Crossed ? "root of var_min − threshold on the exact propagation" + (c.PhysicalPastScenarioEnd ? " (past the scenario's end)" : "") : LifetimeOutput.Status(c.PhysicalStatus)));
        table.AddRow("single-mode t*", Time(c.ApproximateLifetimeS), Markup.Escape($"(1/γ)·ln[(n_th+½−V₀)/(n_th+½−V_thr)], γ = {c.DecayRate:G4} s⁻¹, n_th = {c.BathOccupancy:G4}"));
        table.AddRow("ratio physical / t*", c.Ratio is { } ratio ? ratio.ToString("F6") : "—", "");
        string readout = c.Readout is { } r ? $"n_add = {r.AddedNoise:G4}, {r.Shots} shots, {r.Confidence:P0} upper bound; power 0.5" : "no readout";
        table.AddRow("[bold]observable lifetime[/]",
            c.ObservableStatus == LifetimeStatus.NeverResolved ? "[red]never resolved[/]" : Time(c.ObservableLifetimeS), Markup.Escape(readout));
        if (c.PowerAtStart is { } p0) table.AddRow("power at the reference", p0.ToString("F4"), "");
        return table;
    }

    /// <summary>The sensitivities as a table.</summary>
    public static Table SensitivityTable(LifetimeReport report)
    {
        var table = new Table().Title("sensitivities (finite differences on the exact model)");
        foreach (var h in new[] { "parameter", "change", "Δ physical", "Δ observable" }) table.AddColumn(h);
        foreach (var s in report.Sensitivities)
            table.AddRow(Markup.Escape(s.Parameter), Markup.Escape(s.Change), Signed(s.PhysicalChangeS), Signed(s.ObservableChangeS));
        return table;
    }

    private static string Signed(double? s) => s is { } v && double.IsFinite(v) ? v == 0 ? "0" : (v > 0 ? "+" : "−") + Quantity.Format(Math.Abs(v), Dimension.Time) : "—";
}

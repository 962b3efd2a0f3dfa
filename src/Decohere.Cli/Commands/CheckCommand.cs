using Spectre.Console;
using System.CommandLine;
using Decohere.Analyses.Check;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Model.Readouts;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere check [SCENARIO]</c> (the built-in demo without one): validate and print the derived quantities a physicist checks first.</summary>
public static class CheckCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console)
    {
        var scenario = Cli.ScenarioArgument(optional: true);
        var command = new Command("check", "Validate a scenario and print couplings, cooperativities, bath occupancies, decoherence rates, stage stability, predicted squeezing and warnings.")
        {
            scenario,
        };
        var measured = new MeasuredOptions();
        foreach (var option in measured.All) command.Options.Add(option);
        command.SetAction((parse, _) => Cli.Guard(console, null, () =>
        {
            var values = measured.Read(parse);
            var result = CheckAnalysis.Solve(values.Apply(Cli.Load(parse.GetValue(scenario))));
            foreach (var line in values.Describe()) console.Out.MarkupLineInterpolated($"measured: {line}");
            Print(console, result);
            return Task.FromResult(Cli.Ok);
        }));
        return command;
    }

    /// <summary>The readout chain element by element: each one's gain, its own noise and its share referred to the mode.</summary>
    public static void PrintReadout(IAnsiConsole o, IReadoutChain readout)
    {
        var table = new Table().Title($"readout of {Markup.Escape(readout.Mode)} ({readout.Method}), added noise referred to the mode");
        foreach (var h in new[] { "element", "", "gain", "noise (own input)", "referred to the mode" }) table.AddColumn(h);
        foreach (var c in readout.Contributions)
            table.AddRow(Markup.Escape(c.Element), Markup.Escape(c.Description), Decibels(c.Gain), $"{c.Noise:G4}", $"{c.InputReferred:G4}");
        table.AddRow("[bold]total[/]", "", Decibels(readout.Gain), "", $"[bold]{readout.AddedNoise:G4}[/] quanta per quadrature");
        o.Write(table);
    }

    private static string Decibels(double gain) => $"{10 * Math.Log10(gain):F2} dB";

    private static string Hz(double v) => Quantity.Format(v, Dimension.Frequency);
    private static string Rate(double perSecond) => $"{perSecond:G4} s⁻¹";

    /// <summary>Prints the check as tables.</summary>
    public static void Print(AppConsole console, CheckResult result)
    {
        var report = result.Report;
        var s = result.Scenario;
        var o = console.Out;
        o.MarkupLineInterpolated($"[bold]{s.Name}[/]: valid, model {s.Model.ToString().ToLowerInvariant()}, {s.Modes.Length} modes, {s.Stages.Length} stages, {Quantity.Format(s.TotalDurationS, Dimension.Time)} in all");
        if (s.Lattice is not null) ModesCommand.PrintExpansion(o, s);

        var mech = new Table().Title("mechanical modes");
        foreach (var h in new[] { "mode", "frequency", "linewidth γ/2π", "Q", "bath n_th", "bath T", "γ·n_th", "1/(γ·n_th)" }) mech.AddColumn(h);
        foreach (var m in report.Mechanical)
            mech.AddRow(Markup.Escape(m.Mode.Name), Hz(m.Mode.FrequencyHz), Hz(m.Mode.LinewidthHz), m.Mode.QualityFactor.ToString("G3"),
                m.Occupancy.ToString("G4"), Quantity.Format(m.TemperatureK, Dimension.Temperature), Rate(m.ThermalDecoherenceRate),
                Quantity.Format(m.ThermalDecoherenceTime, Dimension.Time));
        o.Write(mech);

        if (report.Tones.Length > 0)
        {
            var tones = new Table().Title("drive tones");
            foreach (var h in new[] { "stage", "cavity", "mechanical", "sideband", "G/2π", "G", "cooperativity C", "κ/ω_m" }) tones.AddColumn(h);
            foreach (var t in report.Tones)
                tones.AddRow(Markup.Escape(t.Stage), Markup.Escape(t.Tone.Cavity), Markup.Escape(t.Tone.Mechanical), t.Tone.Sideband.ToString().ToLowerInvariant(),
                    Hz(t.Tone.CouplingHz), Rate(t.CouplingRate), t.Cooperativity.ToString("G4"), t.SidebandResolution.ToString("G3"));
            o.Write(tones);
        }

        var stages = new Table().Title("stages");
        foreach (var h in new[] { "stage", "duration", "stability", "rate (max Re λ)", "steady var_min", "steady squeezing" }) stages.AddColumn(h);
        foreach (var st in report.Stages)
        {
            string varMin = "", db = "";
            if (st.SteadyState is { } ss)
            {
                var mechanical = ss.ModeNames.Select((n, j) => (n, j)).Where(p => s.ModeNamed(p.n).Kind == Scenarios.ModeKind.Mechanical).ToArray();
                varMin = string.Join(", ", mechanical.Select(p => $"{p.n}: {ss.Moments(p.j).VarMin:G4}"));
                db = string.Join(", ", mechanical.Select(p => $"{p.n}: {ss.Moments(p.j).SqueezingDb:F2} dB"));
            }
            stages.AddRow(Markup.Escape(st.Stage.Name), Quantity.Format(st.Stage.DurationS, Dimension.Time),
                st.Stability.IsStable ? "[green]stable[/]" : "[red]unstable (amplifies)[/]",
                st.Stability.IsStable ? $"slowest amplitude decay {Rate(st.Stability.SlowestDecayRate)}" : $"growth {Rate(st.Stability.GrowthRate)}",
                Markup.Escape(varMin), Markup.Escape(db));
        }
        o.Write(stages);

        if (report.TwoTone.Length > 0)
        {
            var two = new Table().Title("two-tone squeezing, predicted steady state");
            foreach (var h in new[] { "stage", "mechanical", "r", "Γ", "var_min (bad cavity)", "dB", "var_min (cavity kept)", "dB" }) two.AddColumn(h);
            foreach (var t in report.TwoTone)
                two.AddRow(Markup.Escape(t.Stage), Markup.Escape(t.Mechanical), t.SqueezingParameter.ToString("F3"), Rate(t.DampingRate),
                    t.VarMinBadCavity.ToString("G4"), t.SqueezingDbBadCavity.ToString("F2"), t.VarMinCavityKept.ToString("G4"), t.SqueezingDbCavityKept.ToString("F2"));
            o.Write(two);
        }
        if (report.Readout is { } readout) PrintReadout(o, readout);
        console.Warnings(report.Warnings);
        if (report.Warnings.Length == 0) o.MarkupLine("[green]no warnings[/]");
    }
}

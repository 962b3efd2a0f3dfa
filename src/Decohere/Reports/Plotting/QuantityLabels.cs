using System.Text.RegularExpressions;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Reports.Plotting;

/// <summary>A quantity as a reader sees it: a human name, its dimension and, for pure numbers, a unit word ("quanta").</summary>
/// <param name="Name">"bath temperature of drum", "blue-tone coupling G₊/2π (squeeze)".</param>
/// <param name="Dimension">Decides the unit chosen from the data (ms, kHz, mK).</param>
/// <param name="Plain">Unit of a dimensionless quantity ("quanta", "s⁻¹"), empty for a pure number.</param>
public sealed record QuantityLabel(string Name, Dimension Dimension, string Plain = "")
{
    /// <summary>The unit for these SI values.</summary>
    public DisplayUnit UnitFor(IEnumerable<double> values) => DisplayUnits.For(Dimension, values, Plain);

    /// <summary>"bath temperature of drum (mK)".</summary>
    public string Label(DisplayUnit unit) => unit.Symbol.Length > 0 ? $"{Name} ({unit.Symbol})" : Name;

    /// <summary>One value with the unit that suits it ("12 mK").</summary>
    public string Format(double si, int digits = 4) => UnitFor([si]).Format(si, digits);
}

/// <summary>
/// The one table from parameter paths, sweep metrics and fitted or derived quantities to what plots, tables and text
/// call them. A row is a path pattern (<c>{mode}</c>, <c>{stage}</c>, <c>{k}</c> match one path segment or index), the
/// name (the same placeholders filled in) and the dimension; a new parameter is one row.
/// </summary>
public static partial class QuantityLabels
{
    private static readonly (string Pattern, string Name, Dimension Dimension, string Plain)[] Rows =
    [
        ("modes.{mode}.bath.temperature", "bath temperature of {mode}", Dimension.Temperature, ""),
        ("modes.{mode}.bath.occupancy", "bath occupancy n_th of {mode}", Dimension.Dimensionless, "quanta"),
        ("modes.{mode}.linewidth", "linewidth γ/2π of {mode}", Dimension.Frequency, ""),
        ("modes.{mode}.quality_factor", "quality factor of {mode}", Dimension.Dimensionless, ""),
        ("modes.{mode}.frequency", "frequency ω/2π of {mode}", Dimension.Frequency, ""),
        ("initial.{mode}.occupancy", "initial occupancy of {mode}", Dimension.Dimensionless, "quanta"),
        ("initial.{mode}.squeezing_db", "initial squeezing of {mode}", Dimension.Decibel, ""),
        ("couplings[{k}].rate", "static coupling {k} rate/2π", Dimension.Frequency, ""),
        ("stages.{stage}.duration", "duration of stage {stage}", Dimension.Time, ""),
        ("stages.{stage}.tones[{k}].coupling", "{tone} coupling {G}/2π ({stage})", Dimension.Frequency, ""),
        ("stages.{stage}.bath.{mode}.occupancy", "bath occupancy of {mode} in {stage}", Dimension.Dimensionless, "quanta"),
        ("stages.{stage}.detuning.{mode}", "detuning δ/2π of {mode} in {stage}", Dimension.Frequency, ""),
        ("readout.added_noise", "added noise n_add", Dimension.Dimensionless, "quanta"),
        ("readout.shots", "shots per delay", Dimension.Dimensionless, ""),
        ("readout.coupling", "readout pulse coupling G/2π", Dimension.Frequency, ""),
        ("readout.duration", "readout pulse duration", Dimension.Time, ""),
        ("readout.chain[{k}].efficiency", "efficiency η of chain element {k}", Dimension.Dimensionless, ""),
        ("readout.chain[{k}].gain", "gain of amplifier {k}", Dimension.Decibel, ""),
        ("readout.chain[{k}].noise", "noise of amplifier {k}", Dimension.Dimensionless, "quanta"),
        ("readout.chain[{k}].noise_temperature", "noise temperature of amplifier {k}", Dimension.Temperature, ""),
        // Sweep metrics (the part of the spec before ':'; the argument, a stage, mode or delay, is appended).
        ("steady_var_min", "steady-state var_min", Dimension.Dimensionless, "quanta"),
        ("steady_squeezing_db", "steady-state squeezing", Dimension.Decibel, ""),
        ("end_var_min", "var_min at stage end", Dimension.Dimensionless, "quanta"),
        ("end_squeezing_db", "squeezing at stage end", Dimension.Decibel, ""),
        ("end_occupancy", "occupancy at stage end", Dimension.Dimensionless, "quanta"),
        ("max_re_lambda", "largest Re λ of the drift", Dimension.Dimensionless, "s⁻¹"),
        ("thermal_decoherence_rate", "thermal decoherence rate γ·n_th", Dimension.Dimensionless, "s⁻¹"),
        ("resolution_probability", "probability to resolve the squeezing", Dimension.Dimensionless, ""),
        ("added_noise", "added noise n_add", Dimension.Dimensionless, "quanta"),
        ("physical_lifetime", "physical lifetime", Dimension.Time, ""),
        ("observable_lifetime", "observable lifetime", Dimension.Time, ""),
        // Derived quantities of fits, by their file names.
        ("bath_temperature_k", "bath temperature", Dimension.Temperature, ""),
        ("bath_occupancy", "bath occupancy n_th", Dimension.Dimensionless, "quanta"),
        ("thermal_decoherence_rate_per_s", "thermal decoherence rate γ·n_th", Dimension.Dimensionless, "s⁻¹"),
        ("quality_factor", "quality factor", Dimension.Dimensionless, ""),
        ("linewidth_hz", "linewidth γ/2π", Dimension.Frequency, ""),
        ("energy_decay_time_s", "energy decay time 1/γ", Dimension.Time, ""),
        // Columns of the tables.
        ("delay_s", "delay", Dimension.Time, ""),
        ("time_s", "time", Dimension.Time, ""),
        ("var_min", "var_min", Dimension.Dimensionless, "quanta"),
        ("squeezing_db", "squeezing", Dimension.Decibel, ""),
        ("power", "power", Dimension.Dimensionless, ""),
        ("shots", "shots", Dimension.Dimensionless, ""),
        ("occupancy", "occupancy", Dimension.Dimensionless, "quanta"),
        ("gain", "gain", Dimension.Dimensionless, "measured units per quantum"),
        ("added_noise_input_referred", "added noise, input-referred", Dimension.Dimensionless, "quanta"),
    ];

    private static readonly (Regex Pattern, string Name, Dimension Dimension, string Plain)[] Compiled =
        [.. Rows.Select(r => (new Regex("^" + Placeholder().Replace(Regex.Escape(r.Pattern).Replace(@"\{", "{"),
            m => m.Groups[1].Value == "k" ? @"(?<k>\d+)" : $"(?<{m.Groups[1].Value}>[^.\\[\\]]+)") + "$"), r.Name, r.Dimension, r.Plain))];

    [GeneratedRegex(@"\{(\w+)\}")]
    private static partial Regex Placeholder();

    /// <summary>
    /// The label of a parameter path, metric spec (<c>physical_lifetime:squeeze</c>) or quantity name. With the scenario a
    /// tone's coupling is named by its sideband ("blue-tone coupling G₊/2π"). An unknown name is shown as written.
    /// </summary>
    public static QuantityLabel For(string name, Scenario? scenario = null)
    {
        int colon = name.IndexOf(':');
        string key = colon >= 0 ? name[..colon] : name, argument = colon >= 0 ? name[(colon + 1)..] : "";
        foreach (var (pattern, template, dimension, plain) in Compiled)
        {
            var match = pattern.Match(key);
            if (!match.Success) continue;
            string text = Placeholder().Replace(template, m => m.Groups[1].Value switch
            {
                "tone" => Tone(match, scenario) is { } blue ? (blue ? "blue-tone" : "red-tone") : $"tone {match.Groups["k"].Value}",
                "G" => Tone(match, scenario) is { } blue ? (blue ? "G₊" : "G₋") : "G",
                var g => match.Groups[g].Value,
            });
            return new QuantityLabel(argument.Length > 0 ? $"{text} ({argument})" : text, dimension, plain);
        }
        return new QuantityLabel(name, Dimension.Dimensionless);
    }

    // The sideband of the tone a path names (true for blue), when the scenario is known.
    private static bool? Tone(Match match, Scenario? scenario)
    {
        if (scenario is null || !match.Groups["stage"].Success || !int.TryParse(match.Groups["k"].Value, out int k)) return null;
        var stage = scenario.Stages.FirstOrDefault(s => s.Name == match.Groups["stage"].Value);
        return stage is not null && k < stage.Tones.Length ? stage.Tones[k].Sideband == Sideband.Blue : null;
    }
}

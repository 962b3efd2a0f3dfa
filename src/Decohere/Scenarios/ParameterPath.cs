using System.Collections.Immutable;
using System.Globalization;
using System.Text.RegularExpressions;
using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>
/// A scalar of a scenario named by its path in the file (<c>modes.drum.bath.temperature</c>,
/// <c>stages.squeeze.tones[1].coupling</c>, <c>readout.added_noise</c>): the one place where fits and sweeps
/// read and replace parameters. <see cref="Set"/> returns a modified copy; the scenario is never mutated.
/// Values are in SI units (Hz, s, K) or quanta.
/// </summary>
public sealed partial class ParameterPath
{
    private readonly Func<Scenario, double> _get;
    private readonly Func<Scenario, double, Scenario> _set;

    private ParameterPath(string text, Dimension dimension, bool positive, Func<Scenario, double> get, Func<Scenario, double, Scenario> set,
        bool signed = false)
    {
        IsSigned = signed;
        Text = text;
        Dimension = dimension;
        MustBePositive = positive;
        _get = get;
        _set = set;
    }

    /// <summary>The path as written.</summary>
    public string Text { get; }

    /// <summary>Dimension of the value; decides the units accepted in sweep values.</summary>
    public Dimension Dimension { get; }

    /// <summary>True when only values &gt; 0 make sense (fits then work on the logarithm).</summary>
    public bool MustBePositive { get; }

    /// <summary>True when negative values are meaningful too (detunings).</summary>
    public bool IsSigned { get; }

    /// <summary>Column name with its SI unit, e.g. <c>modes.drum.bath.temperature_k</c>.</summary>
    public string ColumnName => Dimension switch
    {
        Dimension.Frequency => Text + "_hz",
        Dimension.Time => Text + "_s",
        Dimension.Temperature => Text + "_k",
        Dimension.Decibel => Text + "_db",
        Dimension.Angle => Text + "_rad",
        _ => Text,
    };

    /// <summary>The current value in the scenario (SI units).</summary>
    public double Get(Scenario scenario) => _get(scenario);

    /// <summary>A copy of the scenario with this parameter set to <paramref name="value"/> (SI units).</summary>
    /// <exception cref="InputException">The value is not allowed for this parameter.</exception>
    public Scenario Set(Scenario scenario, double value)
    {
        if (!double.IsFinite(value) || (MustBePositive ? value <= 0 : !IsSigned && value < 0))
            throw new InputException($"{Text}: {value.ToString(CultureInfo.InvariantCulture)} is out of range; must be {(MustBePositive ? "> 0" : IsSigned ? "finite" : ">= 0")}");
        return _set(scenario, value);
    }

    /// <summary>Parses a value for this parameter ("5 mK", "0.2"), in its dimension's units.</summary>
    public double ParseValue(string text)
    {
        if (!Quantity.TryParse(text, Dimension, out double v, out string? error))
            throw new InputException($"{Text}: {error}");
        return v;
    }

    /// <summary>The paths that exist in a scenario, for messages and documentation.</summary>
    public static IReadOnlyList<string> Available(Scenario s)
    {
        var list = new List<string>();
        foreach (var m in s.Modes)
        {
            list.Add($"modes.{m.Name}.bath.occupancy");
            list.Add($"modes.{m.Name}.bath.temperature");
            if (m.Bath.IsTransient) list.AddRange([$"modes.{m.Name}.bath.excess", $"modes.{m.Name}.bath.relax_time"]);
            list.Add($"modes.{m.Name}.linewidth");
            list.Add($"modes.{m.Name}.quality_factor");
            list.Add($"modes.{m.Name}.frequency");
        }
        foreach (var (name, state) in s.Initial)
        {
            if (state is InitialState.Thermal) list.Add($"initial.{name}.occupancy");
            if (state is InitialState.Squeezed) list.Add($"initial.{name}.squeezing_db");
        }
        for (int i = 0; i < s.Couplings.Length; i++) list.Add($"couplings[{i}].rate");
        foreach (var st in s.Stages)
        {
            list.Add($"stages.{st.Name}.duration");
            for (int k = 0; k < st.Tones.Length; k++) list.Add($"stages.{st.Name}.tones[{k}].coupling");
            foreach (var mode in st.BathOverrides.Keys) list.Add($"stages.{st.Name}.bath.{mode}.occupancy");
            foreach (var mode in st.DetuningsHz.Keys) list.Add($"stages.{st.Name}.detuning.{mode}");
        }
        if (s.Readout is { } r)
        {
            if (r.AddedNoise is not null) list.Add("readout.added_noise");
            list.Add("readout.shots");
            if (r.Method == ReadoutMethod.Amplification) list.AddRange(["readout.coupling", "readout.duration"]);
            for (int k = 0; k < r.Elements.Length; k++)
                list.AddRange(r.Elements[k] switch
                {
                    ChainElement.Loss => [$"readout.chain[{k}].efficiency"],
                    ChainElement.Amplifier { NoiseTemperatureK: not null } => [$"readout.chain[{k}].gain", $"readout.chain[{k}].noise_temperature"],
                    _ => new[] { $"readout.chain[{k}].gain", $"readout.chain[{k}].noise" },
                });
        }
        return list;
    }

    [GeneratedRegex(@"^stages(?:\.(?<name>[^.\[\]]+)|\[(?<index>\d+)\])\.(?<rest>.+)$")]
    private static partial Regex StagePattern();

    [GeneratedRegex(@"^tones\[(?<k>\d+)\]\.coupling$")]
    private static partial Regex TonePattern();

    [GeneratedRegex(@"^readout\.chain\[(?<k>\d+)\]\.(?<field>efficiency|gain|noise|noise_temperature)$")]
    private static partial Regex ChainPattern();

    [GeneratedRegex(@"^couplings\[(?<k>\d+)\]\.rate$")]
    private static partial Regex CouplingPattern();

    /// <summary>Resolves a path against a scenario.</summary>
    /// <exception cref="InputException">The path does not name a parameter of this scenario; the message lists those that do.</exception>
    public static ParameterPath Parse(string text, Scenario scenario)
    {
        string path = text.Trim();
        var result = TryResolve(path, scenario);
        if (result is not null) return result;
        var available = Available(scenario);
        string suggestion = NameSuggestion.Suggest(path, available, minimumDistance: 3);
        throw new InputException($"'{path}' is not a parameter of scenario '{scenario.Name}'{suggestion}; parameters: {string.Join(", ", available)}");
    }

    private static ParameterPath? TryResolve(string path, Scenario s)
    {
        string[] parts = path.Split('.');
        if (parts.Length >= 3 && parts[0] == "modes" && s.Modes.Any(m => m.Name == parts[1]))
        {
            string mode = parts[1];
            string field = string.Join('.', parts.Skip(2));
            return field switch
            {
                "bath.occupancy" => new(path, Dimension.Dimensionless, false, x => x.ModeNamed(mode).Bath.Occupancy,
                    (x, v) => WithMode(x, mode, m => m with { Bath = m.Bath with { Occupancy = v, TemperatureK = null } })),
                "bath.temperature" => new(path, Dimension.Temperature, false,
                    x => x.ModeNamed(mode) is var m && m.Bath.TemperatureK is { } t ? t : Physics.Temperature(m.FrequencyHz, m.Bath.Occupancy),
                    (x, v) => WithMode(x, mode, m => m with { Bath = m.Bath with { Occupancy = Physics.Occupancy(m.FrequencyHz, v), TemperatureK = v } })),
                "bath.excess" when s.ModeNamed(mode).Bath.IsTransient => new(path, Dimension.Dimensionless, false, x => x.ModeNamed(mode).Bath.Excess,
                    (x, v) => WithMode(x, mode, m => m with { Bath = m.Bath with { Excess = v } })),
                "bath.relax_time" when s.ModeNamed(mode).Bath.IsTransient => new(path, Dimension.Time, true, x => x.ModeNamed(mode).Bath.RelaxTimeS,
                    (x, v) => WithMode(x, mode, m => m with { Bath = m.Bath with { RelaxTimeS = v } })),
                "linewidth" => new(path, Dimension.Frequency, true, x => x.ModeNamed(mode).LinewidthHz,
                    (x, v) => WithMode(x, mode, m => m with { LinewidthHz = v })),
                "quality_factor" => new(path, Dimension.Dimensionless, true, x => x.ModeNamed(mode).QualityFactor,
                    (x, v) => WithMode(x, mode, m => m with { LinewidthHz = m.FrequencyHz / v })),
                "frequency" => new(path, Dimension.Frequency, true, x => x.ModeNamed(mode).FrequencyHz,
                    (x, v) => WithMode(x, mode, m => m with
                    {
                        FrequencyHz = v,
                        Bath = m.Bath.TemperatureK is { } t ? m.Bath with { Occupancy = Physics.Occupancy(v, t) } : m.Bath,
                    })),
                _ => null,
            };
        }
        if (parts.Length == 3 && parts[0] == "initial" && s.Initial.TryGetValue(parts[1], out var state))
        {
            string mode = parts[1];
            return (parts[2], state) switch
            {
                ("occupancy", InitialState.Thermal) => new(path, Dimension.Dimensionless, false,
                    x => ((InitialState.Thermal)x.Initial[mode]).Occupancy,
                    (x, v) => x with { Initial = x.Initial.SetItem(mode, new InitialState.Thermal(v)) }),
                ("squeezing_db", InitialState.Squeezed) => new(path, Dimension.Decibel, false,
                    x => ((InitialState.Squeezed)x.Initial[mode]).SqueezingDb,
                    (x, v) => x with { Initial = x.Initial.SetItem(mode, ((InitialState.Squeezed)x.Initial[mode]) with { SqueezingDb = v }) }),
                _ => null,
            };
        }
        if (CouplingPattern().Match(path) is { Success: true } cm)
        {
            int k = int.Parse(cm.Groups["k"].Value, CultureInfo.InvariantCulture);
            if (k >= s.Couplings.Length) return null;
            return new(path, Dimension.Frequency, false, x => x.Couplings[k].RateHz,
                (x, v) => x with { Couplings = x.Couplings.SetItem(k, x.Couplings[k] with { RateHz = v }) });
        }
        if (StagePattern().Match(path) is { Success: true } sm)
        {
            int index = sm.Groups["index"].Success
                ? int.Parse(sm.Groups["index"].Value, CultureInfo.InvariantCulture)
                : s.Stages.Select((st, i) => (st, i)).FirstOrDefault(p => p.st.Name == sm.Groups["name"].Value, (null!, -1)).Item2;
            if (index < 0 || index >= s.Stages.Length) return null;
            string rest = sm.Groups["rest"].Value;
            var stage = s.Stages[index];
            if (rest == "duration")
                return new(path, Dimension.Time, true, x => x.Stages[index].DurationS,
                    (x, v) => WithStage(x, index, st => st with { DurationS = v }));
            if (TonePattern().Match(rest) is { Success: true } tm)
            {
                int k = int.Parse(tm.Groups["k"].Value, CultureInfo.InvariantCulture);
                if (k >= stage.Tones.Length) return null;
                return new(path, Dimension.Frequency, false, x => x.Stages[index].Tones[k].CouplingHz,
                    (x, v) => WithStage(x, index, st => st with { Tones = st.Tones.SetItem(k, st.Tones[k] with { CouplingHz = v, Form = CouplingForm.Direct }) }));
            }
            string[] r = rest.Split('.');
            if (r.Length == 3 && r[0] == "bath" && r[2] == "occupancy" && s.Modes.Any(m => m.Name == r[1]))
                return new(path, Dimension.Dimensionless, false,
                    x => x.BathOf(x.ModeNamed(r[1]), x.Stages[index]).Occupancy,
                    (x, v) => WithStage(x, index, st => st with { BathOverrides = st.BathOverrides.SetItem(r[1], new Bath(v)) }));
            if (r.Length == 2 && r[0] == "detuning" && s.Modes.Any(m => m.Name == r[1]))
                return new(path, Dimension.Frequency, false,
                    x => x.Stages[index].DetuningsHz.GetValueOrDefault(r[1]),
                    (x, v) => WithStage(x, index, st => st with { DetuningsHz = st.DetuningsHz.SetItem(r[1], v) }), signed: true);
            return null;
        }
        if (s.Readout is { AddedNoise: not null } && path == "readout.added_noise")
            return new(path, Dimension.Dimensionless, false, x => x.Readout!.AddedNoise!.Value, (x, v) => x with { Readout = x.Readout! with { AddedNoise = v } });
        if (s.Readout is { Method: ReadoutMethod.Amplification } && path == "readout.coupling")
            return new(path, Dimension.Frequency, true, x => x.Readout!.AmplificationCouplingHz,
                (x, v) => x with { Readout = x.Readout! with { AmplificationCouplingHz = v } });
        if (s.Readout is { Method: ReadoutMethod.Amplification } && path == "readout.duration")
            return new(path, Dimension.Time, true, x => x.Readout!.AmplificationDurationS,
                (x, v) => x with { Readout = x.Readout! with { AmplificationDurationS = v } });
        if (s.Readout is { } readout && ChainPattern().Match(path) is { Success: true } chm)
        {
            int k = int.Parse(chm.Groups["k"].Value, CultureInfo.InvariantCulture);
            if (k >= readout.Elements.Length) return null;
            Scenario WithElement(Scenario x, ChainElement e) => x with { Readout = x.Readout! with { Chain = x.Readout!.Elements.SetItem(k, e) } };
            return (chm.Groups["field"].Value, readout.Elements[k]) switch
            {
                ("efficiency", ChainElement.Loss) => new(path, Dimension.Dimensionless, true, x => ((ChainElement.Loss)x.Readout!.Elements[k]).Efficiency,
                    (x, v) => v <= 1 ? WithElement(x, new ChainElement.Loss(v))
                        : throw new InputException($"{path}: {v.ToString(CultureInfo.InvariantCulture)} is out of range; a transmission must be in (0, 1]")),
                ("gain", ChainElement.Amplifier) => new(path, Dimension.Decibel, false, x => ((ChainElement.Amplifier)x.Readout!.Elements[k]).GainDb,
                    (x, v) => WithElement(x, (ChainElement.Amplifier)x.Readout!.Elements[k] with { GainDb = v }), signed: true),
                ("noise", ChainElement.Amplifier { NoiseTemperatureK: null }) => new(path, Dimension.Dimensionless, false,
                    x => ((ChainElement.Amplifier)x.Readout!.Elements[k]).Noise,
                    (x, v) => WithElement(x, (ChainElement.Amplifier)x.Readout!.Elements[k] with { Noise = v })),
                ("noise_temperature", ChainElement.Amplifier { NoiseTemperatureK: not null, FrequencyHz: { } f }) => new(path, Dimension.Temperature, true,
                    x => ((ChainElement.Amplifier)x.Readout!.Elements[k]).NoiseTemperatureK!.Value,
                    (x, v) => WithElement(x, (ChainElement.Amplifier)x.Readout!.Elements[k] with { NoiseTemperatureK = v, Noise = Physics.NoiseQuanta(v, f) })),
                _ => null,
            };
        }
        if (s.Readout is not null && path == "readout.shots")
            return new(path, Dimension.Dimensionless, true, x => x.Readout!.Shots,
                (x, v) => x with { Readout = x.Readout! with { Shots = Math.Max(2, (int)Math.Round(v)) } });
        return null;
    }

    private static Scenario WithMode(Scenario s, string name, Func<Mode, Mode> change) =>
        s with { Modes = [.. s.Modes.Select(m => m.Name == name ? change(m) : m)] };

    private static Scenario WithStage(Scenario s, int index, Func<Stage, Stage> change) =>
        s with { Stages = s.Stages.SetItem(index, change(s.Stages[index])) };
}

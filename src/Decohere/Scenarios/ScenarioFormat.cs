using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>
/// Scenario format v1 as data: every section, its keys and what each key holds (a quantity of a dimension, a number with
/// its range, a choice, a name, a list, a map of names). The JSON Schema shipped as <c>scenarios/scenario.schema.json</c>
/// is generated from it (<see cref="Schema"/>), and the tests hold the loader's accepted keys, the schema file and the
/// example scenarios to it. A new key is one <see cref="Key"/> line in its section.
/// </summary>
public static class ScenarioFormat
{
    /// <summary>The format version this describes.</summary>
    public const int Version = 1;

    /// <summary>What a key holds.</summary>
    public abstract record Kind(string Doc);

    /// <summary>A quantity: a "number unit" string of the dimension, or a bare number in its SI unit.</summary>
    public sealed record QuantityKind(Dimension Dimension, string Doc, double? Minimum = null) : Kind(Doc);

    /// <summary>A plain number (possibly written as a string), optionally whole, within a range.</summary>
    public sealed record NumberKind(string Doc, double? Minimum = null, double? Maximum = null, bool Whole = false) : Kind(Doc);

    /// <summary>One of fixed words.</summary>
    public sealed record ChoiceKind(string Doc, params string[] Values) : Kind(Doc);

    /// <summary>true or false.</summary>
    public sealed record BooleanKind(string Doc) : Kind(Doc);

    /// <summary>A name of something declared elsewhere in the file (a mode, a stage) or a label.</summary>
    public sealed record NameKind(string Doc, string Pattern = NamePattern) : Kind(Doc);

    /// <summary>A mapping with fixed keys.</summary>
    public sealed record Section(string Name, string Doc, params Key[] Keys) : Kind(Doc);

    /// <summary>A mapping from names (modes) to values.</summary>
    public sealed record MapKind(string Doc, Kind Value, int? MaxEntries = null) : Kind(Doc);

    /// <summary>A list.</summary>
    public sealed record ListKind(string Doc, Kind Item, int? MinItems = null, int? MaxItems = null) : Kind(Doc);

    /// <summary>Any of several forms (a shorthand word or a section).</summary>
    public sealed record EitherKind(string Doc, params Kind[] Forms) : Kind(Doc);

    /// <summary>A key of a section.</summary>
    public sealed record Key(string Name, Kind Value, bool Required = false);

    /// <summary>Mode and stage names: no control characters and none of the parameter-path separators <c>. [ ]</c>.</summary>
    public const string NamePattern = @"^[^.\[\]\u0000-\u001f\u007f]+$";

    // ASCII digits only, as Quantity.TryParse reads them.
    private const string Number = @"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?";

    private static readonly NumberKind Quanta = new("quanta (zero-point ½ per quadrature)", 0, 1e15);
    private static readonly NameKind ModeName = new("name of a mode");

    private static Section Bath => new("bath", "give exactly one: temperature (Bose–Einstein at the mode's frequency) or occupancy",
        new Key("temperature", new QuantityKind(Dimension.Temperature, "bath temperature, e.g. 15 mK", 0)),
        new Key("occupancy", new NumberKind("bath occupancy (quanta)", 0, 1e15)),
        new Key("heating", new Section("heating", "extra occupancy as the drive grows: coefficient·C^exponent, or a table of [cooperativity, extra quanta] pairs",
            new Key("coefficient", new NumberKind("extra quanta per unit cooperativity^exponent", 0, 1e15)),
            new Key("exponent", new NumberKind("power of the summed cooperativity (default 1)", 0, 10)),
            new Key("table", new ListKind("[cooperativity, extra quanta] pairs, cooperativity increasing",
                new ListKind("a pair", new NumberKind("cooperativity, then extra quanta", 0), 2, 2))))),
        new Key("excess", new NumberKind("excess occupancy at from_stage's start, relaxing with relax_time (quanta)", 0, 1e15)),
        new Key("relax_time", new QuantityKind(Dimension.Time, "relaxation time of the excess occupancy, e.g. 2 ms", 0)),
        new Key("from_stage", new NameKind("stage whose start the excess relaxes from (default: the first stage, or the overriding stage)")));

    private static Section Mode => new("mode", "a mode: mechanical resonator or cavity",
        new Key("kind", new ChoiceKind("mode kind", "mechanical", "cavity"), Required: true),
        new Key("frequency", new QuantityKind(Dimension.Frequency, "mode frequency, e.g. 4 MHz", 0), Required: true),
        new Key("linewidth", new QuantityKind(Dimension.Frequency, "energy decay rate γ/2π (ordinary frequency), or give quality_factor", 0)),
        new Key("quality_factor", new NumberKind("Q = frequency / linewidth", 0)),
        new Key("bath", Bath));

    private static Section Coupling => new("coupling", "a static coupling between two modes",
        new Key("modes", new ListKind("the two modes", ModeName, 2, 2), Required: true),
        new Key("kind", new ChoiceKind("coupling kind", "beam-splitter", "two-mode-squeezing"), Required: true),
        new Key("rate", new QuantityKind(Dimension.Frequency, "coupling rate/2π", 0), Required: true));

    private static readonly string[] States = ["ground", "thermal", "squeezed", "coherent", "steady"];

    private static EitherKind Initial => new("initial state of a mode",
        new ChoiceKind("shorthand: ground, thermal (the mode's own bath), coherent (at the origin) or steady", "ground", "thermal", "coherent", "steady"),
        new Section("initial", "initial state with its parameters",
            new Key("state", new ChoiceKind("state", States), Required: true),
            new Key("occupancy", new NumberKind("thermal occupancy (quanta)", 0, 1e15)),
            new Key("squeezing_db", new QuantityKind(Dimension.Decibel, "squeezing below zero-point, e.g. 5 dB", 0)),
            new Key("angle", new QuantityKind(Dimension.Angle, "squeezed quadrature's angle from x towards p")),
            new Key("x", new NumberKind("mean of x")),
            new Key("p", new NumberKind("mean of p"))));

    private static Section Tone => new("tone", "a drive tone on a motional sideband; give coupling, or g0 and photons, or cooperativity",
        new Key("cavity", new NameKind("name of a cavity mode"), Required: true),
        new Key("mechanical", new NameKind("name of a mechanical mode"), Required: true),
        new Key("sideband", new ChoiceKind("red (beam-splitter) or blue (two-mode squeezing)", "red", "blue"), Required: true),
        new Key("coupling", new QuantityKind(Dimension.Frequency, "G/2π, e.g. 20 kHz", 0)),
        new Key("g0", new QuantityKind(Dimension.Frequency, "single-photon coupling g0/2π (G = g0·√photons)", 0)),
        new Key("photons", new NumberKind("intracavity photon number", 0)),
        new Key("cooperativity", new NumberKind("C = 4G²/(κγ)", 0)));

    private static Section CollectiveTone => new("collective_tone", "lattice: a tone driving one collective mode of the cavity network",
        new Key("collective", new NumberKind("index of the collective mode (0 … sites − 1, by frequency)", 0, 99, Whole: true), Required: true),
        new Key("sideband", new ChoiceKind("red (beam-splitter) or blue (two-mode squeezing)", "red", "blue"), Required: true),
        new Key("photons", new NumberKind("photons in the driven collective mode", 0), Required: true));

    private static Section Stage => new("stage", "a stage of constant drives",
        new Key("name", new NameKind("stage name"), Required: true),
        new Key("duration", new QuantityKind(Dimension.Time, "stage duration, e.g. 2 ms", 0), Required: true),
        new Key("tones", new ListKind("drive tones during the stage", new EitherKind("a tone on one cavity, or on a lattice's collective mode", Tone, CollectiveTone))),
        new Key("bath", new MapKind("bath occupancy overrides per mode during the stage", Bath)),
        new Key("detuning", new MapKind("rotating-frame detuning δ/2π per mode", new QuantityKind(Dimension.Frequency, "detuning, e.g. 3 Hz"))));

    private static Section ChainElement => new("chain_element", "a loss (efficiency) or an amplifier (gain with noise or noise_temperature)",
        new Key("efficiency", new NumberKind("transmission η of a loss", 0, 1)),
        new Key("gain", new QuantityKind(Dimension.Decibel, "power gain, e.g. 20 dB")),
        new Key("noise", new NumberKind("added noise referred to the element's input (quanta)", 0, 1e15)),
        new Key("noise_temperature", new QuantityKind(Dimension.Temperature, "noise temperature, e.g. 2 K", 0)),
        new Key("frequency", new QuantityKind(Dimension.Frequency, "frequency the noise temperature is read at (default: the read cavity's)", 0)));

    private static Section Readout => new("readout", "how the readout mode is measured, shot by shot",
        new Key("mode", ModeName, Required: true),
        new Key("method", new ChoiceKind("readout method", "phenomenological", "amplification")),
        new Key("added_noise", Quanta),
        new Key("chain", new ListKind("readout chain in signal order", ChainElement)),
        new Key("shots", new NumberKind("shots per delay", 2, int.MaxValue, Whole: true), Required: true),
        new Key("stage", new NameKind("stage the delays count from"), Required: true),
        new Key("delays", new ListKind("delays after the start of the stage", new QuantityKind(Dimension.Time, "delay, e.g. 1 ms", 0)), Required: true),
        new Key("coupling", new QuantityKind(Dimension.Frequency, "amplification: blue-sideband pulse coupling G/2π", 0)),
        new Key("duration", new QuantityKind(Dimension.Time, "amplification: pulse length", 0)),
        new Key("detector_noise", new NumberKind("amplification: noise of a detector right after the pulse (quanta)", 0, 1e15)));

    private static Section Jitter => new("jitter", "shot-to-shot Gaussian spread of device parameters",
        new Key("frequency", new MapKind("frequency spread per mechanical mode", new QuantityKind(Dimension.Frequency, "standard deviation, e.g. 2 Hz", 0))),
        new Key("coupling", new NumberKind("relative spread of every tone's coupling", 0, 1)),
        new Key("occupancy", new MapKind("bath occupancy spread per mode", new NumberKind("standard deviation (quanta)", 0))));

    private static Section Output => new("output", "the covariance table",
        new Key("step", new QuantityKind(Dimension.Time, "interval of the covariance table (default: total duration / 1000)", 0)));

    private static Section LatticeCavity(bool required) => new(required ? "lattice_cavity" : "cell_cavity", required ? "every cell's cavity" : "this cell's cavity",
        new Key("frequency", new QuantityKind(Dimension.Frequency, "cavity frequency, e.g. 6 GHz", 0), required),
        new Key("linewidth", new QuantityKind(Dimension.Frequency, "cavity linewidth κ/2π, e.g. 1 MHz", 0), required),
        new Key("bath", Bath, required));

    private static Section LatticeDrum(bool required) => new("lattice_drum", "every cell's drum",
        new Key("frequency", new QuantityKind(Dimension.Frequency, "drum frequency of cell 0, e.g. 5 MHz", 0), required),
        new Key("spacing", new QuantityKind(Dimension.Frequency, "drum frequency step from cell to cell (any sign)")),
        new Key("linewidth", new QuantityKind(Dimension.Frequency, "drum linewidth γ/2π, e.g. 1 Hz", 0), required),
        new Key("bath", Bath, required),
        new Key("g0", new QuantityKind(Dimension.Frequency, "single-photon coupling g0/2π, e.g. 20 Hz", 0), required));

    private static Section Lattice => new("lattice", "cells of a cavity and a drum, generated: chain, honeycomb flake or explicit sites and bonds",
        new Key("kind", new ChoiceKind("lattice kind", "chain", "honeycomb", "explicit"), Required: true),
        new Key("sites", new NumberKind("chain: number of sites", 2, Scenarios.Lattice.MaxSites, Whole: true)),
        new Key("couplings", new ListKind("hopping rates J/2π (chain: repeating pattern, honeycomb: 1 or 3 directions)", new QuantityKind(Dimension.Frequency, "hopping, e.g. 80 MHz"), 1, 8)),
        new Key("boundary", new ChoiceKind("chain ends", "open", "periodic")),
        new Key("next_nearest", new QuantityKind(Dimension.Frequency, "next-nearest hopping rate")),
        new Key("shape", new ChoiceKind("honeycomb flake shape", "hexagon", "triangle", "rectangle")),
        new Key("size", new NumberKind("honeycomb: plaquettes along an edge", 1, 20, Whole: true)),
        new Key("rows", new NumberKind("honeycomb rectangle: rows of plaquettes", 1, 40, Whole: true)),
        new Key("edges", new ChoiceKind("honeycomb hexagon: edge termination", "zigzag", "armchair")),
        new Key("positions", new ListKind("explicit: [x, y] per site", new ListKind("a position", new NumberKind("coordinate"), 2, 2), 2)),
        new Key("bonds", new ListKind("explicit: bonds between sites", new Section("bond", "a bond",
            new Key("sites", new ListKind("the two sites", new NumberKind("site index", 0, Whole: true), 2, 2), Required: true),
            new Key("rate", new QuantityKind(Dimension.Frequency, "hopping rate, e.g. 80 MHz"), Required: true),
            new Key("kind", new ChoiceKind("bond kind", "nearest", "next-nearest"))))),
        new Key("cavity", LatticeCavity(true), Required: true),
        new Key("drum", LatticeDrum(true), Required: true),
        new Key("disorder", new Section("disorder", "seeded Gaussian disorder per cell and bond",
            new Key("frequency", new QuantityKind(Dimension.Frequency, "cavity frequency spread σ", 0)),
            new Key("linewidth", new QuantityKind(Dimension.Frequency, "cavity linewidth spread σ", 0)),
            new Key("coupling", new QuantityKind(Dimension.Frequency, "hopping spread σ", 0)),
            new Key("seed", new NumberKind("disorder seed", 0, long.MaxValue, Whole: true)))),
        new Key("cells", new MapKind("per-cell overrides by site index", new Section("cell", "one cell's own values",
            new Key("cavity", LatticeCavity(false)),
            new Key("drum", new Section("cell_drum", "this cell's drum",
                new Key("frequency", new QuantityKind(Dimension.Frequency, "drum frequency", 0)),
                new Key("linewidth", new QuantityKind(Dimension.Frequency, "drum linewidth", 0)),
                new Key("bath", Bath),
                new Key("g0", new QuantityKind(Dimension.Frequency, "single-photon coupling", 0))))))));

    /// <summary>The whole file.</summary>
    public static Section Root { get; } = new("scenario", $"Decohere scenario, format v{Version}",
        new Key("name", new NameKind("scenario name, also the default output directory results/<name>/", @"^[A-Za-z0-9][A-Za-z0-9 _.+()-]*$"), Required: true),
        new Key("model", new ChoiceKind("full (cavities kept) or effective (cavities eliminated)", "full", "effective")),
        new Key("sideband_corrections", new BooleanKind("effective model: add the off-resonant scattering rates")),
        new Key("modes", new MapKind("modes by name (required unless lattice: generates them)", Mode, MaxEntries: ScenarioLoader.MaxModes)),
        new Key("couplings", new ListKind("static couplings", Coupling)),
        new Key("lattice", Lattice),
        new Key("initial", new MapKind("initial state per mode (others start in their bath's thermal state)", Initial)),
        new Key("stages", new ListKind("stages in time order", Stage, MinItems: 1), Required: true),
        new Key("readout", Readout),
        new Key("jitter", Jitter),
        new Key("output", Output),
        new Key("seed", new NumberKind("random seed", 0, long.MaxValue, Whole: true)));

    /// <summary>Every section of the format, each once, by name.</summary>
    public static IReadOnlyDictionary<string, Section> Sections()
    {
        var found = new Dictionary<string, Section>();
        void Walk(Kind kind)
        {
            switch (kind)
            {
                case Section s when found.TryAdd(s.Name, s):
                    foreach (var k in s.Keys) Walk(k.Value);
                    break;
                case MapKind m: Walk(m.Value); break;
                case ListKind l: Walk(l.Item); break;
                case EitherKind e: foreach (var f in e.Forms) Walk(f); break;
            }
        }
        Walk(Root);
        return found;
    }

    /// <summary>The JSON Schema (draft 2020-12) of the format; each section is a definition under <c>$defs</c>.</summary>
    public static JsonObject Schema()
    {
        var defs = new JsonObject();
        foreach (var (name, section) in Sections().Where(s => s.Key != Root.Name))
            defs[name] = Object(section);
        var root = new JsonObject
        {
            ["$schema"] = "https://json-schema.org/draft/2020-12/schema",
            ["$id"] = $"https://decohere.invalid/scenario-v{Version}.schema.json",
            ["title"] = Root.Doc,
        };
        foreach (var (k, v) in Object(Root)) root[k] = v?.DeepClone();
        root["description"] = "Generated from src/Decohere/Scenarios/ScenarioFormat.cs (DECOHERE_WRITE_SCHEMA=1 dotnet test --filter ScenarioSchemaTests " +
                              "rewrites it). Quantities are \"number unit\" strings or bare numbers in SI units.";
        root["$defs"] = defs;
        return root;
    }

    private static JsonObject Object(Section s)
    {
        var properties = new JsonObject();
        foreach (var key in s.Keys) properties[key.Name] = Of(key.Value);
        var o = new JsonObject { ["type"] = "object", ["description"] = s.Doc, ["properties"] = properties, ["additionalProperties"] = false };
        var required = s.Keys.Where(k => k.Required).Select(k => (JsonNode)JsonValue.Create(k.Name)!).ToArray();
        if (required.Length > 0) o["required"] = new JsonArray(required);
        return o;
    }

    private static JsonNode Of(Kind kind) => kind switch
    {
        Section s when s.Name == Root.Name => throw new InvalidOperationException("the root is not nested"),
        Section s => new JsonObject { ["$ref"] = $"#/$defs/{s.Name}" },
        QuantityKind q => Quantity(q),
        NumberKind n => Numeric(n),
        ChoiceKind c => new JsonObject { ["description"] = c.Doc, ["enum"] = new JsonArray([.. c.Values.Select(v => (JsonNode)JsonValue.Create(v)!)]) },
        BooleanKind b => new JsonObject { ["description"] = b.Doc, ["type"] = "boolean" },
        NameKind n => new JsonObject { ["description"] = n.Doc, ["type"] = "string", ["pattern"] = n.Pattern },
        MapKind m => Map(m),
        ListKind l => List(l),
        EitherKind e => new JsonObject { ["description"] = e.Doc, ["anyOf"] = new JsonArray([.. e.Forms.Select(Of)]) },
        _ => throw new InvalidOperationException(kind.ToString()),
    };

    private static JsonObject Quantity(QuantityKind q)
    {
        var units = Core.Quantity.UnitsOf(q.Dimension).Concat(Core.Quantity.UnitsOf(q.Dimension).Where(u => u.StartsWith('u')).Select(u => "µ" + u[1..]));
        string unit = string.Join('|', units);
        var number = new JsonObject { ["type"] = "number" };
        if (q.Minimum is { } min) number["minimum"] = min;
        return new JsonObject
        {
            ["description"] = $"{q.Doc} ({q.Dimension.ToString().ToLowerInvariant()}: {string.Join(", ", Core.Quantity.UnitsOf(q.Dimension))}, or a bare number in {Core.Quantity.SiUnit(q.Dimension)})",
            ["anyOf"] = new JsonArray(number, new JsonObject { ["type"] = "string", ["pattern"] = $@"^\s*{Number}\s*({unit})?\s*$" }),
        };
    }

    private static JsonObject Numeric(NumberKind n)
    {
        var number = new JsonObject { ["type"] = "number" };
        if (n.Minimum is { } min) number["minimum"] = min;
        if (n.Maximum is { } max) number["maximum"] = max;
        if (n.Whole) number["multipleOf"] = 1;
        return new JsonObject
        {
            ["description"] = n.Doc,
            ["anyOf"] = new JsonArray(number, new JsonObject { ["type"] = "string", ["pattern"] = $@"^\s*{Number}\s*$" }),
        };
    }

    private static JsonObject Map(MapKind m)
    {
        var o = new JsonObject
        {
            ["description"] = m.Doc, ["type"] = "object",
            ["propertyNames"] = new JsonObject { ["pattern"] = NamePattern },
            ["additionalProperties"] = Of(m.Value),
        };
        if (m.MaxEntries is { } max) o["maxProperties"] = max;
        return o;
    }

    private static JsonObject List(ListKind l)
    {
        var o = new JsonObject { ["description"] = l.Doc, ["type"] = "array", ["items"] = Of(l.Item) };
        if (l.MinItems is { } min) o["minItems"] = min;
        if (l.MaxItems is { } max) o["maxItems"] = max;
        return o;
    }

    /// <summary>The schema file's text (indented, LF line ends, trailing newline).</summary>
    public static string SchemaText() =>
        Schema().ToJsonString(IO.JsonFiles.Options).Replace("\r\n", "\n", StringComparison.Ordinal) + "\n";
}

using System.Collections.Immutable;
using System.Reflection;
using System.Security.Cryptography;
using System.Text;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;
using Decohere.Core;
using Decohere.IO;

namespace Decohere.Scenarios;

/// <summary>
/// Turns scenario YAML (format v1) into a validated <see cref="Scenario"/>. Every problem in the file is
/// collected and reported at once, each with its path, line and column.
/// </summary>
public static class ScenarioLoader
{
    /// <summary>Most modes in one scenario.</summary>
    public const int MaxModes = 500;

    /// <summary>The built-in demo scenario's text (identical to scenarios/demo.yaml).</summary>
    public static string DemoText
    {
        get
        {
            using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream("Decohere.demo.yaml")
                ?? throw new InvalidOperationException("demo scenario resource is missing from the build");
            using var reader = new StreamReader(stream);
            return reader.ReadToEnd();
        }
    }

    /// <summary>The built-in demo scenario.</summary>
    public static Scenario Demo() => Parse(DemoText, "demo.yaml");

    /// <summary>Loads and validates a scenario file.</summary>
    /// <exception cref="ScenarioException">The file does not validate; every problem is listed.</exception>
    public static Scenario Load(string path)
    {
        if (!File.Exists(path))
            throw new ScenarioException(path, [new ScenarioProblem(path, 0, 0, "file not found")]);
        long length = new FileInfo(path).Length;
        if (length > MaxFileBytes)
            throw new ScenarioException(path, [new ScenarioProblem(path, 0, 0, $"the file has {length} bytes; a scenario file has at most {MaxFileBytes} (the 40-mode example has 7 KB)")]);
        return Parse(File.ReadAllText(path), path);
    }

    /// <summary>Validates scenario text; <paramref name="source"/> labels the problems.</summary>
    /// <exception cref="ScenarioException">The text does not validate; every problem is listed.</exception>
    public static Scenario Parse(string text, string source = "scenario")
    {
        YamlMappingNode root;
        Parser? parser = null;
        try
        {
            if (TooDeep(text) is { } deep) throw new ScenarioException(source, [deep]);
            var stream = new YamlStream();
            parser = new Parser(new StringReader(text));
            stream.Load(parser);
            if (stream.Documents.Count == 0 || stream.Documents[0].RootNode is not YamlMappingNode map)
                throw new ScenarioException(source, [new ScenarioProblem("(file)", 1, 1, "the file is not a YAML mapping of scenario fields")]);
            root = map;
        }
        catch (YamlException e)
        {
            string message = (e.InnerException?.Message ?? e.Message).Split(['\n'])[0];
            throw new ScenarioException(source, [new ScenarioProblem("(yaml)", (int)e.Start.Line, (int)e.Start.Column, $"malformed YAML: {message}")]);
        }
        catch (ArgumentException) when (parser?.Current is { } at)
        {
            // The tree builder meets an event it has no node for; the fuzz test found it after a ':' on its own line, which
            // YAML reads as a key without a name. The builder only fails at the end of the mapping, so point at the colon.
            var lines = text.Split('\n');
            int lone = Array.FindIndex(lines, l => l.TrimStart().StartsWith(':') && (l.TrimStart().Length == 1 || char.IsWhiteSpace(l.TrimStart()[1])));
            throw new ScenarioException(source, [lone >= 0
                ? new ScenarioProblem("(yaml)", lone + 1, lines[lone].IndexOf(':') + 1, "malformed YAML: a ':' without a key before it")
                : new ScenarioProblem("(yaml)", (int)at.Start.Line, (int)at.Start.Column, $"malformed YAML: unexpected {at.GetType().Name} here")]);
        }
        catch (InvalidOperationException)
        {
            // The YAML parser runs out of input inside an unclosed flow collection or quote without a position.
            int lines = text.Split('\n').Length;
            throw new ScenarioException(source, [new ScenarioProblem("(yaml)", lines, 1, "malformed YAML: the file ends inside an unclosed bracket, brace or quote")]);
        }
        var builder = new Builder(text);
        var scenario = builder.Build(root);
        if (builder.Reader.Problems.Count > 0 || scenario is null)
            throw new ScenarioException(source, builder.Reader.Problems.OrderBy(p => p.Line).ThenBy(p => p.Column).ToList());
        return scenario;
    }

    /// <summary>Largest scenario file read: far beyond any real scenario, small enough to refuse a wrong file (a data dump) at once.</summary>
    public const long MaxFileBytes = 16 << 20;

    /// <summary>Deepest nesting of lists and mappings accepted; a scenario needs six levels.</summary>
    public const int MaxDepth = 64;

    // YamlStream builds its tree recursively, so 50 000 nested brackets overflow the stack, which no handler can catch.
    // The event parser keeps its own stack, so a first pass with it measures the depth safely before the tree is built.
    internal static ScenarioProblem? TooDeep(string text)
    {
        var parser = new Parser(new StringReader(text));
        int depth = 0;
        while (parser.MoveNext())
        {
            switch (parser.Current)
            {
                case YamlDotNet.Core.Events.MappingStart or YamlDotNet.Core.Events.SequenceStart:
                    if (++depth > MaxDepth)
                        return new ScenarioProblem("(yaml)", (int)parser.Current.Start.Line, (int)parser.Current.Start.Column,
                            $"lists and mappings are nested more than {MaxDepth} levels deep; a scenario needs at most six");
                    break;
                case YamlDotNet.Core.Events.MappingEnd or YamlDotNet.Core.Events.SequenceEnd:
                    depth--;
                    break;
            }
        }
        return null;
    }

    /// <summary>SHA-256 of the scenario text, lower-case hex.</summary>
    public static string Hash(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)));

    private sealed class Builder(string text)
    {
        public YamlReader Reader { get; } = new();

        private LatticeLoader.Expansion? _lattice;
        private readonly Dictionary<string, CollectiveTone> _drives = [];

        // Names of every mode in the file, valid or not: a reference to an invalid mode is not a second problem.
        private readonly HashSet<string> _declared = [];

        private static readonly string[] TopKeys =
            ["name", "model", "sideband_corrections", "modes", "couplings", "lattice", "initial", "stages", "readout", "jitter", "output", "seed"];

        public Scenario? Build(YamlMappingNode root)
        {
            var r = Reader;
            r.Mapping(root, "", TopKeys);
            string? name = r.String(r.Required(root, "", "name", "scenario name"), "name");
            if (name is not null && OutputDirectory.NameProblem(name) is { } badName)
            {
                r.Report("name", YamlReader.Get(root, "name"), badName);
                name = null;
            }
            ModelKind model = r.Enum(YamlReader.Get(root, "model"), "model", ("full", ModelKind.Full), ("effective", ModelKind.Effective)) ?? ModelKind.Full;
            bool corrections = r.Bool(YamlReader.Get(root, "sideband_corrections"), "sideband_corrections") ?? false;
            if (corrections && model == ModelKind.Full)
                r.Report("sideband_corrections", YamlReader.Get(root, "sideband_corrections"),
                    "off-resonant sideband rates are an option of model: effective (the full model keeps the cavity in the rotating-wave approximation)");

            ImmutableArray<Mode> modes;
            ImmutableArray<StaticCoupling> couplings;
            Dictionary<string, Mode> byName;
            if (YamlReader.Get(root, "lattice") is { } latticeNode)
            {
                // A lattice generates its modes and couplings (Scenarios/LatticeLoader).
                foreach (var key in new[] { "modes", "couplings" })
                    if (YamlReader.Get(root, key) is { } extra) r.Report(key, extra, $"a lattice scenario generates its {key} (cavity_j, drum_j); remove {key}: or lattice:");
                if (model == ModelKind.Effective)
                    r.Report("model", YamlReader.Get(root, "model"), "a lattice's cavities are coupled to each other, so they cannot be eliminated one by one; use model: full");
                _lattice = LatticeLoader.Read(r, latticeNode, BathOf);
                modes = _lattice?.Modes ?? [];
                couplings = _lattice?.Couplings ?? [];
                byName = modes.ToDictionary(m => m.Name);
                _declared.UnionWith(byName.Keys);
            }
            else
            {
                var modesNode = r.Required(root, "", "modes", "map of mode name to mode");
                if (modesNode is YamlMappingNode declared)
                    _declared.UnionWith(declared.Children.Keys.OfType<YamlScalarNode>().Select(k => k.Value ?? ""));
                modes = Modes(modesNode);
                byName = modes.ToDictionary(m => m.Name);
                couplings = Couplings(YamlReader.Get(root, "couplings"), byName, model);
            }
            var initial = Initials(YamlReader.Get(root, "initial"), byName);
            var stages = Stages(r.Required(root, "", "stages", "list of stages"), byName, model);
            foreach (var (path, node, stageName) in _fromStages)
                if (!stages.Any(s => s.Name == stageName))
                    r.Report(path, node, $"unknown stage '{stageName}'{NameSuggestion.Suggest(stageName, [.. stages.Select(s => s.Name)])}; stages: {string.Join(", ", stages.Select(s => s.Name))}");
            var readout = ReadoutOf(YamlReader.Get(root, "readout"), byName, stages);
            var jitter = JitterOf(YamlReader.Get(root, "jitter"), byName);

            double total = stages.Sum(s => s.DurationS);
            var outputMap = r.Mapping(YamlReader.Get(root, "output"), "output", "step");
            double step = r.Number(YamlReader.Get(outputMap, "step"), "output.step", Dimension.Time, 0, minExclusive: true)
                          ?? (total > 0 ? total / 1000 : 1e-6);
            if (total > 0 && total / step > 5e7)
                r.Report("output.step", YamlReader.Get(outputMap, "step"), $"gives {total / step:G3} output times; use a step of at least {total / 5e7:G3} s");
            long seed = r.Integer(YamlReader.Get(root, "seed"), "seed", 0) ?? 1;

            if (name is null || r.Problems.Count > 0) return null;
            var scenario = new Scenario(name, model, corrections, modes, couplings, initial, stages, readout, jitter,
                step, seed, text, Hash(text), _lattice is null ? null : _lattice.Lattice with { Drives = _drives.ToImmutableDictionary() });
            CheckScales(scenario);
            return r.Problems.Count > 0 ? null : scenario;
        }

        /// <summary>Largest rate × duration (angular rate in s⁻¹ times seconds) accepted for any one field.</summary>
        /// <remarks>
        /// The engine takes eigenvalues and matrix exponentials of the drift of a whole stage at once; in double
        /// precision they resolve rates about twelve decades apart and no more (a 1e20 Hz linewidth beside a 200 kHz
        /// cavity made the stability analysis call a damped stage unstable; 1e308 Hz overflowed to ∞ and stopped the
        /// eigen-solver). Physical rates times the durations they act for stay far below: the demo's largest is κ·t ≈ 4e3.
        /// </remarks>
        public const double MaxRateTime = 1e12;

        /// <summary>Largest mode frequency accepted (Hz).</summary>
        public const double MaxFrequencyHz = 1e16;

        /// <summary>Largest occupancy or noise (quanta) accepted: a 1 Hz oscillator at 5·10⁴ K; beyond it variances times shot counts leave double range.</summary>
        public const double MaxQuanta = 1e15;

        // Fields that are each valid but together leave double precision: rates times the durations they act for,
        // and occupancies too large for sums over shots.
        private void CheckScales(Scenario s)
        {
            var r = Reader;
            double total = s.TotalDurationS;
            if (!double.IsFinite(total))
            {
                r.Report("stages", null, "the stage durations add up to more than double precision holds; give durations in a physical range");
                return;
            }
            void Rate(string path, double hz, double seconds, string what)
            {
                double product = Physics.Angular(Math.Abs(hz)) * seconds;
                if (!(product <= MaxRateTime))
                    r.Report(path, r.NumberNode(path), $"{what}: 2π × {hz:G3} Hz × {Quantity.Format(seconds, Dimension.Time)} {(double.IsFinite(product) ? $"= {product:G3}" : "overflows and")} exceeds {MaxRateTime:G3}; " +
                        "a rate this far beyond the scenario's durations cannot be resolved beside its other rates in double precision (use a smaller rate or a shorter duration)");
            }
            void Quanta(string path, double value, double limit = MaxQuanta, string unit = "quanta")
            {
                if (Math.Abs(value) > limit)
                    r.Report(path, r.NumberNode(path), $"{value:G3} is out of range: must be at most {limit:G3} {unit} " +
                        "(10¹⁵ quanta is a 1 Hz oscillator at 5·10⁴ K; beyond it variances summed over shots leave double precision)");
            }
            string First(params string[] paths) => paths.FirstOrDefault(p => r.NumberNode(p) is not null) ?? paths[0];

            foreach (var m in s.Modes)
            {
                string path = $"modes.{m.Name}";
                Rate(First(path + ".linewidth", path + ".quality_factor"), m.LinewidthHz, total, "linewidth × total duration");
                Quanta(First(path + ".bath.occupancy", path + ".bath.temperature"), m.Bath.Occupancy);
            }
            for (int i = 0; i < s.Couplings.Length; i++)
                Rate($"couplings[{i}].rate", s.Couplings[i].RateHz, total, "rate × total duration");
            foreach (var (name, state) in s.Initial)
            {
                if (state is InitialState.Thermal t) Quanta($"initial.{name}.occupancy", t.Occupancy);
                if (state is InitialState.Coherent c)
                {
                    // A displacement x carries x²/2 quanta.
                    Quanta($"initial.{name}.x", c.X, Math.Sqrt(2 * MaxQuanta), "in magnitude");
                    Quanta($"initial.{name}.p", c.P, Math.Sqrt(2 * MaxQuanta), "in magnitude");
                }
            }
            for (int i = 0; i < s.Stages.Length; i++)
            {
                var stage = s.Stages[i];
                string path = $"stages[{i}]";
                for (int k = 0; k < stage.Tones.Length; k++)
                {
                    string tone = $"{path}.tones[{k}]";
                    Rate(First(tone + ".coupling", tone + ".g0", tone + ".cooperativity"), stage.Tones[k].CouplingHz, stage.DurationS, "coupling × stage duration");
                }
                foreach (var (mode, hz) in stage.DetuningsHz) Rate($"{path}.detuning.{mode}", hz, stage.DurationS, "detuning × stage duration");
                foreach (var (mode, bath) in stage.BathOverrides)
                    Quanta(First($"{path}.bath.{mode}.occupancy", $"{path}.bath.{mode}.temperature"), bath.Occupancy);
            }
            // A jittered frequency is a detuning of several σ in some shot.
            foreach (var (mode, hz) in s.Jitter.FrequencyHz) Rate($"jitter.frequency.{mode}", 10 * hz, total, "10 σ × total duration");
            foreach (var (mode, n) in s.Jitter.Occupancy) Quanta($"jitter.occupancy.{mode}", n);
            if (s.Readout is { } ro)
            {
                if (ro.AddedNoise is { } added) Quanta("readout.added_noise", added);
                for (int k = 0; k < ro.Chain.Length; k++)
                    if (ro.Chain[k] is ChainElement.Amplifier amplifier)
                        Quanta(First($"readout.chain[{k}].noise", $"readout.chain[{k}].noise_temperature", "readout.detector_noise"), amplifier.Noise);
                Rate("readout.coupling", ro.AmplificationCouplingHz, ro.AmplificationDurationS, "coupling × pulse duration");
            }
        }

        private ImmutableArray<Mode> Modes(YamlNode? node)
        {
            var r = Reader;
            var map = r.NamedMapping(node, "modes");
            var result = ImmutableArray.CreateBuilder<Mode>();
            if (map is null) return result.ToImmutable();
            if (map.Children.Count == 0) r.Report("modes", map, "at least one mode is needed");
            if (map.Children.Count > MaxModes)
            {
                r.Report("modes", map, $"{map.Children.Count} modes; at most {MaxModes}: the engine's dense matrices cost the cube of the mode count " +
                    "(checking a 400-mode chain takes about 4 s, so a few thousand modes would run for hours)");
                return result.ToImmutable();
            }
            foreach (var (name, key, value) in YamlReader.Entries(map))
            {
                string path = $"modes.{name}";
                if (LabelProblem(name, "mode") is { } bad) r.Report(path, key, bad);
                var m = r.Mapping(value, path, "kind", "frequency", "linewidth", "quality_factor", "bath");
                if (m is null) continue;
                ModeKind? kind = r.Enum(r.Required(m, path, "kind", "mechanical | cavity"), path + ".kind",
                    ("mechanical", ModeKind.Mechanical), ("cavity", ModeKind.Cavity));
                // The upper bound lies past ultraviolet light, above any resonator a cavity couples to; 1e308 Hz made Q = f/γ infinite.
                double? f = r.Number(r.Required(m, path, "frequency", "a frequency, e.g. 4.1 MHz"), path + ".frequency", Dimension.Frequency, 0, minExclusive: true, max: MaxFrequencyHz);
                double? linewidth = null;
                var lw = YamlReader.Get(m, "linewidth");
                var qf = YamlReader.Get(m, "quality_factor");
                if (lw is not null && qf is not null)
                    r.Report(path, m, "give either linewidth or quality_factor, not both");
                else if (lw is not null)
                    linewidth = r.Number(lw, path + ".linewidth", Dimension.Frequency, 0, minExclusive: true);
                else if (qf is not null)
                {
                    double? q = r.Number(qf, path + ".quality_factor", Dimension.Dimensionless, 0, minExclusive: true);
                    if (q is not null && f is not null) linewidth = f / q;
                }
                else
                    r.Report(path + ".linewidth", m, "missing field 'linewidth' (energy decay rate / 2π, e.g. 0.15 Hz) or 'quality_factor'");

                Bath? bath;
                var bathNode = YamlReader.Get(m, "bath");
                if (bathNode is null && kind == ModeKind.Cavity) bath = new Bath(0);
                else bath = BathOf(r.Required(m, path, "bath", "{ temperature: 15 mK } or { occupancy: 320 }"), path + ".bath", f);

                if (kind is not null && f is not null && linewidth is not null && bath is not null)
                    result.Add(new Mode(name, kind.Value, f.Value, linewidth.Value, bath));
            }
            return result.ToImmutable();
        }

        private Bath? BathOf(YamlNode? node, string path, double? frequencyHz)
        {
            var r = Reader;
            var m = r.Mapping(node, path, "temperature", "occupancy", "heating", "excess", "relax_time", "from_stage");
            if (m is null) return null;
            var heating = HeatingOf(YamlReader.Get(m, "heating"), path + ".heating");
            var (excess, relax, from) = TransientOf(m, path);
            var t = YamlReader.Get(m, "temperature");
            var n = YamlReader.Get(m, "occupancy");
            if ((t is null) == (n is null))
            {
                r.Report(path, m, "give exactly one of temperature or occupancy");
                return null;
            }
            if (n is not null)
            {
                double? occ = r.Number(n, path + ".occupancy", Dimension.Dimensionless, 0);
                return occ is null ? null : new Bath(occ.Value) { Heating = heating, Excess = excess, RelaxTimeS = relax, FromStage = from };
            }
            double? kelvin = r.Number(t, path + ".temperature", Dimension.Temperature, 0);
            if (kelvin is null || frequencyHz is null) return null;
            return new Bath(Physics.Occupancy(frequencyHz.Value, kelvin.Value), kelvin.Value) { Heating = heating, Excess = excess, RelaxTimeS = relax, FromStage = from };
        }

        // Stage names a transient bath relaxes from, checked once the stages are read: (path, node, name).
        private readonly List<(string Path, YamlNode Node, string Name)> _fromStages = [];

        // excess: 150 (quanta), relax_time: 2 ms, from_stage: readout; excess and relax_time come together.
        private (double Excess, double RelaxTimeS, string? FromStage) TransientOf(YamlMappingNode m, string path)
        {
            var r = Reader;
            var e = YamlReader.Get(m, "excess");
            var t = YamlReader.Get(m, "relax_time");
            var from = YamlReader.Get(m, "from_stage");
            if (e is null && t is null && from is null) return (0, 0, null);
            if (e is null || t is null)
            {
                r.Report(path, m, "a transient bath needs both excess (quanta) and relax_time (e.g. 2 ms)");
                return (0, 0, null);
            }
            double? excess = r.Number(e, path + ".excess", Dimension.Dimensionless, 0, max: MaxQuanta);
            double? tau = r.Number(t, path + ".relax_time", Dimension.Time, 0, minExclusive: true);
            string? stage = from is null ? null : r.String(from, path + ".from_stage");
            if (stage is not null) _fromStages.Add((path + ".from_stage", from!, stage));
            return excess is null || tau is null ? (0, 0, null) : (excess.Value, tau.Value, stage);
        }

        // heating: { coefficient: 2e-5, exponent: 1 } (extra quanta a·C^b) or { table: [[C, extra], ...] }, C increasing.
        private HeatingLaw? HeatingOf(YamlNode? node, string path)
        {
            var r = Reader;
            var m = r.Mapping(node, path, "coefficient", "exponent", "table");
            if (m is null) return null;
            var tableNode = YamlReader.Get(m, "table");
            if (tableNode is not null)
            {
                if (YamlReader.Has(m, "coefficient") || YamlReader.Has(m, "exponent"))
                    r.Report(path, m, "give either coefficient and exponent or a table, not both");
                var rows = r.Sequence(tableNode, path + ".table");
                if (rows is null) return null;
                var table = ImmutableArray.CreateBuilder<(double, double)>();
                for (int k = 0; k < rows.Children.Count; k++)
                {
                    string at = $"{path}.table[{k}]";
                    if (rows.Children[k] is not YamlSequenceNode pair || pair.Children.Count != 2)
                    {
                        r.Report(at, rows.Children[k], "expected a pair [cooperativity, extra occupancy]");
                        continue;
                    }
                    double? c = r.Number(pair.Children[0], at + "[0]", Dimension.Dimensionless, 0, max: 1e12);
                    double? n = r.Number(pair.Children[1], at + "[1]", Dimension.Dimensionless, 0, max: MaxQuanta);
                    if (c is null || n is null) continue;
                    if (table.Count > 0 && c <= table[^1].Item1) r.Report(at, pair, "cooperativities must increase down the table");
                    table.Add((c.Value, n.Value));
                }
                if (rows.Children.Count == 0) r.Report(path + ".table", rows, "the table needs at least one row");
                return new HeatingLaw(0, 0, table.ToImmutable());
            }
            double? a = r.Number(r.Required(m, path, "coefficient", "extra quanta per unit cooperativity^exponent"), path + ".coefficient", Dimension.Dimensionless, 0, max: MaxQuanta);
            double? b = r.Number(YamlReader.Get(m, "exponent"), path + ".exponent", Dimension.Dimensionless, 0, max: 10) ?? 1;
            return a is null ? null : new HeatingLaw(a.Value, b.Value);
        }

        private Mode? ModeRef(YamlNode? node, string path, Dictionary<string, Mode> modes, ModeKind? required)
        {
            string? name = Reader.String(node, path);
            if (name is null) return null;
            if (!modes.TryGetValue(name, out var mode))
            {
                if (_declared.Contains(name)) return null;
                string valid = required is null ? string.Join(", ", modes.Keys)
                    : string.Join(", ", modes.Values.Where(x => x.Kind == required).Select(x => x.Name));
                Reader.Report(path, node, $"unknown mode '{name}'{NameSuggestion.Suggest(name, modes.Keys)}; modes{(required is null ? "" : $" of kind {Kind(required.Value)}")}: {valid}");
                return null;
            }
            if (required is not null && mode.Kind != required)
            {
                Reader.Report(path, node, $"mode '{name}' is {Kind(mode.Kind)}, expected a {Kind(required.Value)} mode");
                return null;
            }
            return mode;
        }

        private static string Kind(ModeKind k) => k == ModeKind.Mechanical ? "mechanical" : "cavity";

        private ImmutableArray<StaticCoupling> Couplings(YamlNode? node, Dictionary<string, Mode> modes, ModelKind model)
        {
            var r = Reader;
            var result = ImmutableArray.CreateBuilder<StaticCoupling>();
            var seq = r.Sequence(node, "couplings");
            if (seq is null) return result.ToImmutable();
            for (int i = 0; i < seq.Children.Count; i++)
            {
                string path = $"couplings[{i}]";
                var m = r.Mapping(seq.Children[i], path, "modes", "kind", "rate");
                if (m is null) continue;
                var pair = r.Sequence(r.Required(m, path, "modes", "two mode names, e.g. [a, b]"), path + ".modes");
                Mode? a = null, b = null;
                if (pair is not null)
                {
                    if (pair.Children.Count != 2) r.Report(path + ".modes", pair, $"expected exactly two mode names, got {pair.Children.Count}");
                    else
                    {
                        a = ModeRef(pair.Children[0], path + ".modes[0]", modes, null);
                        b = ModeRef(pair.Children[1], path + ".modes[1]", modes, null);
                        if (a is not null && a == b) r.Report(path + ".modes", pair, "a coupling needs two different modes");
                    }
                }
                CouplingKind? kind = r.Enum(r.Required(m, path, "kind", "beam-splitter | two-mode-squeezing"), path + ".kind",
                    ("beam-splitter", CouplingKind.BeamSplitter), ("two-mode-squeezing", CouplingKind.TwoModeSqueezing));
                double? rate = r.Number(r.Required(m, path, "rate", "a frequency, e.g. 1 MHz"), path + ".rate", Dimension.Frequency, 0);
                if (model == ModelKind.Effective && (a?.Kind == ModeKind.Cavity || b?.Kind == ModeKind.Cavity))
                    r.Report(path, m, "the effective model eliminates cavities, so a static coupling may join only mechanical modes; use model: full");
                if (a is not null && b is not null && a != b && kind is not null && rate is not null)
                    result.Add(new StaticCoupling(a.Name, b.Name, kind.Value, rate.Value));
            }
            return result.ToImmutable();
        }

        private ImmutableDictionary<string, InitialState> Initials(YamlNode? node, Dictionary<string, Mode> modes)
        {
            var r = Reader;
            var result = ImmutableDictionary.CreateBuilder<string, InitialState>();
            var map = r.NamedMapping(node, "initial");
            if (map is null) return result.ToImmutable();
            foreach (var (name, keyNode, value) in YamlReader.Entries(map))
            {
                string path = $"initial.{name}";
                var mode = ModeRef(keyNode, path, modes, null);
                if (value is YamlScalarNode brief)
                {
                    if (Shorthand(brief, path, mode) is { } state0 && mode is not null) result[mode.Name] = state0;
                    continue;
                }
                var m = r.Mapping(value, path, "state", "occupancy", "squeezing_db", "angle", "x", "p");
                if (m is null) continue;
                var stateNode = r.Required(m, path, "state", "ground | thermal | squeezed | coherent | steady");
                string? state = r.String(stateNode, path + ".state");
                string[] states = ["ground", "thermal", "squeezed", "coherent", "steady"];
                if (state is not null && !states.Contains(state))
                {
                    r.Report(path + ".state", stateNode, $"'{state}' is not allowed{NameSuggestion.Suggest(state, states)}; allowed: {string.Join(" | ", states)}");
                    state = null;
                }
                string[] allowed = state switch
                {
                    "thermal" => ["state", "occupancy"],
                    "squeezed" => ["state", "squeezing_db", "angle"],
                    "coherent" => ["state", "x", "p"],
                    _ => ["state"],
                };
                foreach (var key in m.Children.Keys.OfType<YamlScalarNode>())
                    if (state is not null && !allowed.Contains(key.Value))
                        r.Report($"{path}.{key.Value}", key, $"'{key.Value}' does not apply to state {state}; allowed: {string.Join(", ", allowed)}");
                InitialState? initial = state switch
                {
                    "ground" => new InitialState.Ground(),
                    "steady" => new InitialState.Steady(),
                    "thermal" => r.Number(r.Required(m, path, "occupancy", "quanta"), path + ".occupancy", Dimension.Dimensionless, 0) is { } n
                        ? new InitialState.Thermal(n) : null,
                    "squeezed" => r.Number(r.Required(m, path, "squeezing_db", "e.g. 5 dB"), path + ".squeezing_db", Dimension.Decibel, 0, max: 60) is { } db
                        ? new InitialState.Squeezed(db, r.Number(YamlReader.Get(m, "angle"), path + ".angle", Dimension.Angle) ?? 0) : null,
                    "coherent" => new InitialState.Coherent(
                        r.Number(YamlReader.Get(m, "x"), path + ".x", Dimension.Dimensionless) ?? 0,
                        r.Number(YamlReader.Get(m, "p"), path + ".p", Dimension.Dimensionless) ?? 0),
                    _ => null,
                };
                if (mode is not null && initial is not null) result[mode.Name] = initial;
            }
            return result.ToImmutable();
        }

        // Mode and stage names are printed to terminals and written into parameter paths (modes.<name>.linewidth,
        // stages.<name>.tones[0].coupling), so they may hold neither control characters nor the paths' separators.
        private static string? LabelProblem(string name, string what)
        {
            if (name.Length == 0) return $"a {what} name must not be empty";
            if (name.Length > 100) return $"the {what} name is {name.Length} characters long; at most 100";
            int control = name.AsSpan().IndexOfAnyInRange('\0', '\u001f') is var c0 and >= 0 ? c0 : name.AsSpan().IndexOfAnyInRange('\u007f', '\u009f');
            if (control >= 0)
                return $"the {what} name contains the control character U+{(int)name[control]:X4}; use letters, digits, '-' and '_'";
            int separator = name.IndexOfAny(['.', '[', ']']);
            if (separator >= 0)
                return $"the {what} name '{name}' contains '{name[separator]}', which separates parameter paths (modes.<name>.linewidth, stages.<name>.tones[0]); use letters, digits, '-' and '_'";
            return null;
        }

        // `drum: ground` for `drum: { state: ground }`; `drum: thermal` is the thermal state of the mode's own bath.
        private InitialState? Shorthand(YamlScalarNode node, string path, Mode? mode)
        {
            string? state = Reader.String(node, path);
            switch (state)
            {
                case null: return null;
                case "ground": return new InitialState.Ground();
                case "steady": return new InitialState.Steady();
                case "coherent": return new InitialState.Coherent(0, 0);
                case "thermal": return mode is null ? null : new InitialState.Thermal(mode.Bath.Occupancy);
                case "squeezed":
                    Reader.Report(path, node, "state squeezed needs its squeezing: write { state: squeezed, squeezing_db: 5 dB, angle: 0 deg }");
                    return null;
                default:
                    string[] states = ["ground", "thermal", "squeezed", "coherent", "steady"];
                    Reader.Report(path, node, $"'{YamlReader.Shorten(state)}' is not a state{NameSuggestion.Suggest(state, states)}; allowed: ground | thermal (at the mode's bath) | steady | coherent (at the origin), or a mapping {{ state: ..., ... }}");
                    return null;
            }
        }

        private ImmutableArray<Stage> Stages(YamlNode? node, Dictionary<string, Mode> modes, ModelKind model)
        {
            var r = Reader;
            var result = ImmutableArray.CreateBuilder<Stage>();
            var seq = r.Sequence(node, "stages");
            if (seq is null) return result.ToImmutable();
            if (seq.Children.Count == 0) r.Report("stages", seq, "the stage list is empty; at least one stage is needed");
            var names = new HashSet<string>();
            for (int i = 0; i < seq.Children.Count; i++)
            {
                string path = $"stages[{i}]";
                var m = r.Mapping(seq.Children[i], path, "name", "duration", "tones", "bath", "detuning");
                if (m is null) continue;
                string? name = r.String(r.Required(m, path, "name", "stage name"), path + ".name");
                if (name is not null && LabelProblem(name, "stage") is { } bad)
                {
                    r.Report(path + ".name", YamlReader.Get(m, "name"), bad);
                    name = null;
                }
                if (name is not null && !names.Add(name))
                    r.Report(path + ".name", YamlReader.Get(m, "name"), $"duplicate stage name '{name}'");
                double? duration = r.Number(r.Required(m, path, "duration", "a time, e.g. 1 ms"), path + ".duration", Dimension.Time, 0, minExclusive: true);

                var tones = ImmutableArray.CreateBuilder<Tone>();
                var toneSeq = r.Sequence(YamlReader.Get(m, "tones"), path + ".tones");
                CollectiveTone? drive = null;
                for (int k = 0; toneSeq is not null && k < toneSeq.Children.Count; k++)
                {
                    if (LatticeLoader.IsCollective(toneSeq.Children[k]))
                    {
                        if (drive is not null || toneSeq.Children.Count > 1)
                            r.Report($"{path}.tones[{k}]", toneSeq.Children[k], "a stage with a collective tone has no other tone: the tone fixes the frame of the whole network");
                        drive = LatticeLoader.Collective(r, toneSeq.Children[k], $"{path}.tones[{k}]", _lattice?.Lattice);
                    }
                    else if (ToneOf(toneSeq.Children[k], $"{path}.tones[{k}]", modes) is { } tone) tones.Add(tone);
                }

                var baths = ImmutableDictionary.CreateBuilder<string, Bath>();
                var bathMap = r.NamedMapping(YamlReader.Get(m, "bath"), path + ".bath");
                foreach (var (modeName, keyNode, value) in YamlReader.Entries(bathMap))
                {
                    var mode = ModeRef(keyNode, $"{path}.bath.{modeName}", modes, null);
                    if (BathOf(value, $"{path}.bath.{modeName}", mode?.FrequencyHz) is { } b && mode is not null)
                        baths[mode.Name] = b;
                }
                var detunings = ImmutableDictionary.CreateBuilder<string, double>();
                var detMap = r.NamedMapping(YamlReader.Get(m, "detuning"), path + ".detuning");
                foreach (var (modeName, keyNode, value) in YamlReader.Entries(detMap))
                {
                    string p = $"{path}.detuning.{modeName}";
                    var mode = ModeRef(keyNode, p, modes, null);
                    if (mode?.Kind == ModeKind.Cavity && model == ModelKind.Effective)
                        r.Report(p, keyNode, "the effective model eliminates cavities at the sideband resonance; a cavity detuning needs model: full");
                    if (r.Number(value, p, Dimension.Frequency) is { } d && mode is not null) detunings[mode.Name] = d;
                }
                if (name is null || duration is null) continue;
                var stage = new Stage(name, duration.Value, tones.ToImmutable(), baths.ToImmutable(), detunings.ToImmutable());
                if (_lattice is not null && r.Problems.Count == 0)
                {
                    stage = LatticeLoader.Frame(_lattice.Lattice, _lattice.Modes, _lattice.Couplings, stage, drive);
                    if (drive is not null) _drives[name] = drive;
                }
                result.Add(stage);
            }
            return result.ToImmutable();
        }

        private Tone? ToneOf(YamlNode node, string path, Dictionary<string, Mode> modes)
        {
            var r = Reader;
            var m = r.Mapping(node, path, "cavity", "mechanical", "sideband", "coupling", "g0", "photons", "cooperativity");
            if (m is null) return null;
            var cavity = ModeRef(r.Required(m, path, "cavity", "name of a cavity mode"), path + ".cavity", modes, ModeKind.Cavity);
            var mech = ModeRef(r.Required(m, path, "mechanical", "name of a mechanical mode"), path + ".mechanical", modes, ModeKind.Mechanical);
            Sideband? sideband = r.Enum(r.Required(m, path, "sideband", "red | blue"), path + ".sideband", ("red", Sideband.Red), ("blue", Sideband.Blue));

            bool direct = YamlReader.Has(m, "coupling");
            bool single = YamlReader.Has(m, "g0") || YamlReader.Has(m, "photons");
            bool coop = YamlReader.Has(m, "cooperativity");
            int forms = (direct ? 1 : 0) + (single ? 1 : 0) + (coop ? 1 : 0);
            if (forms != 1)
            {
                r.Report(path, m, forms == 0
                    ? "missing coupling: give exactly one of coupling (G), g0 + photons, or cooperativity"
                    : "give exactly one of coupling (G), g0 + photons, or cooperativity");
                return null;
            }
            double? g = null;
            CouplingForm form = CouplingForm.Direct;
            if (direct)
                g = r.Number(YamlReader.Get(m, "coupling"), path + ".coupling", Dimension.Frequency, 0);
            else if (single)
            {
                form = CouplingForm.SinglePhoton;
                double? g0 = r.Number(r.Required(m, path, "g0", "single-photon coupling, e.g. 50 Hz"), path + ".g0", Dimension.Frequency, 0);
                double? n = r.Number(r.Required(m, path, "photons", "intracavity photon number"), path + ".photons", Dimension.Dimensionless, 0);
                if (g0 is not null && n is not null) g = g0 * Math.Sqrt(n.Value);
            }
            else
            {
                form = CouplingForm.Cooperativity;
                double? c = r.Number(YamlReader.Get(m, "cooperativity"), path + ".cooperativity", Dimension.Dimensionless, 0);
                if (c is not null && cavity is not null && mech is not null)
                    g = Physics.CouplingForCooperativity(c.Value, cavity.LinewidthHz, mech.LinewidthHz);
            }
            if (cavity is null || mech is null || sideband is null || g is null) return null;
            return new Tone(cavity.Name, mech.Name, sideband.Value, g.Value, form);
        }

        private Readout? ReadoutOf(YamlNode? node, Dictionary<string, Mode> modes, ImmutableArray<Stage> stages)
        {
            var r = Reader;
            const string path = "readout";
            var m = r.Mapping(node, path, "mode", "added_noise", "chain", "shots", "stage", "delays", "method", "coupling", "duration", "detector_noise");
            if (m is null) return null;
            var mode = ModeRef(r.Required(m, path, "mode", "name of the measured mode"), path + ".mode", modes, null);
            var method = r.Enum(YamlReader.Get(m, "method"), path + ".method",
                ("phenomenological", ReadoutMethod.Phenomenological), ("amplification", ReadoutMethod.Amplification)) ?? ReadoutMethod.Phenomenological;
            double? added = r.Number(YamlReader.Get(m, "added_noise"), path + ".added_noise", Dimension.Dimensionless, 0);
            long? shots = r.Integer(r.Required(m, path, "shots", "shots per delay"), path + ".shots", 2, int.MaxValue);
            string? stageName = r.String(r.Required(m, path, "stage", "stage the delays count from"), path + ".stage");
            int stageIndex = -1;
            if (stageName is not null)
            {
                stageIndex = stages.Select((s, i) => (s, i)).FirstOrDefault(p => p.s.Name == stageName, (null!, -1)).Item2;
                if (stageIndex < 0 && stages.Length > 0)
                    r.Report(path + ".stage", YamlReader.Get(m, "stage"), $"unknown stage '{stageName}'{NameSuggestion.Suggest(stageName, stages.Select(s => s.Name))}; stages: {string.Join(", ", stages.Select(s => s.Name))}");
            }
            var delays = ImmutableArray.CreateBuilder<double>();
            var seq = r.Sequence(r.Required(m, path, "delays", "list of times, e.g. [0 ms, 1 ms]"), path + ".delays");
            double remaining = stageIndex >= 0 ? stages.Skip(stageIndex).Sum(s => s.DurationS) : double.PositiveInfinity;
            for (int i = 0; seq is not null && i < seq.Children.Count; i++)
            {
                double? d = r.Number(seq.Children[i], $"{path}.delays[{i}]", Dimension.Time, 0);
                if (d is null) continue;
                if (d > remaining * (1 + 1e-12))
                    r.Report($"{path}.delays[{i}]", seq.Children[i], $"delay {Quantity.Format(d.Value, Dimension.Time)} runs past the end of the scenario ({Quantity.Format(remaining, Dimension.Time)} after the start of stage '{stageName}')");
                delays.Add(Math.Min(d.Value, remaining));
            }
            if (seq is not null && seq.Children.Count == 0) r.Report(path + ".delays", seq, "at least one delay is needed");

            // The read cavity: the one a tone couples to the measured mode; it fixes the frequency of noise temperatures.
            var readCavity = mode is null ? null : stages.SelectMany(s => s.Tones).FirstOrDefault(t => t.Mechanical == mode.Name) is { } tone ? modes[tone.Cavity] : null;
            var chain = ChainOf(YamlReader.Get(m, "chain"), path + ".chain", readCavity);
            var addedNode = YamlReader.Get(m, "added_noise");
            var chainNode = YamlReader.Get(m, "chain");
            var detectorNode = YamlReader.Get(m, "detector_noise");
            double coupling = 0, duration = 0;
            if (method == ReadoutMethod.Amplification)
            {
                coupling = r.Number(r.Required(m, path, "coupling", "blue-sideband coupling of the amplification pulse"), path + ".coupling", Dimension.Frequency, 0, minExclusive: true) ?? 0;
                duration = r.Number(r.Required(m, path, "duration", "length of the amplification pulse"), path + ".duration", Dimension.Time, 0, minExclusive: true) ?? 0;
                if (mode is not null && mode.Kind != ModeKind.Mechanical)
                    r.Report(path + ".mode", YamlReader.Get(m, "mode"), "amplification readout needs a mechanical readout mode");
                if (addedNode is not null)
                    r.Report(path + ".added_noise", addedNode, "with method: amplification the added noise follows from the pulse and readout.chain; remove added_noise, or use method: phenomenological");
                if (detectorNode is not null && chainNode is not null)
                    r.Report(path + ".detector_noise", detectorNode, "give readout.detector_noise or readout.chain, not both (detector_noise is shorthand for chain: [{ gain: 0 dB, noise: N }])");
                // detector_noise: N is a one-element chain, a detector adding N quanta referred to its own input.
                else if (detectorNode is not null && r.Number(detectorNode, path + ".detector_noise", Dimension.Dimensionless, 0) is { } detector)
                    chain = [new ChainElement.Amplifier(0, detector)];
            }
            else
            {
                foreach (var key in new[] { "coupling", "duration", "detector_noise" })
                    if (YamlReader.Get(m, key) is { } extra)
                        r.Report($"{path}.{key}", extra, $"'{key}' applies only to method: amplification");
                if (addedNode is not null && chainNode is not null)
                    r.Report(path + ".added_noise", addedNode, "give readout.added_noise or readout.chain, not both: the chain's added noise follows from its elements");
                else if (addedNode is null && chainNode is null)
                    r.Report(path, m, "missing 'added_noise' (quanta per quadrature, input-referred) or 'chain' (the elements after the cavity output)");
            }
            if (mode is null || shots is null || stageIndex < 0) return null;
            return new Readout(mode.Name, method == ReadoutMethod.Phenomenological && chainNode is null ? added : null,
                (int)Math.Min(shots.Value, int.MaxValue), stageName!, delays.ToImmutable(), method, coupling, duration, chain);
        }

        private ImmutableArray<ChainElement> ChainOf(YamlNode? node, string path, Mode? readCavity)
        {
            var r = Reader;
            var seq = r.Sequence(node, path);
            var result = ImmutableArray.CreateBuilder<ChainElement>();
            for (int k = 0; seq is not null && k < seq.Children.Count; k++)
            {
                string p = $"{path}[{k}]";
                var e = r.Mapping(seq.Children[k], p, "efficiency", "gain", "noise", "noise_temperature", "frequency");
                if (e is null) continue;
                if (YamlReader.Has(e, "efficiency"))
                {
                    foreach (var key in new[] { "gain", "noise", "noise_temperature", "frequency" })
                        if (YamlReader.Get(e, key) is { } extra)
                            r.Report($"{p}.{key}", extra, "an element is a loss (efficiency) or an amplifier (gain with noise or noise_temperature), not both");
                    if (r.Number(YamlReader.Get(e, "efficiency"), p + ".efficiency", Dimension.Dimensionless, 0, minExclusive: true, max: 1) is { } eta)
                        result.Add(new ChainElement.Loss(eta));
                    continue;
                }
                double? gain = r.Number(r.Required(e, p, "gain", "power gain, e.g. 20 dB (or efficiency for a loss)"), p + ".gain", Dimension.Decibel);
                var noiseNode = YamlReader.Get(e, "noise");
                var temperatureNode = YamlReader.Get(e, "noise_temperature");
                var frequencyNode = YamlReader.Get(e, "frequency");
                if (noiseNode is not null && temperatureNode is not null)
                {
                    r.Report(p + ".noise_temperature", temperatureNode, "give noise (quanta, referred to the amplifier's input) or noise_temperature, not both");
                    continue;
                }
                if (noiseNode is null && temperatureNode is null)
                {
                    r.Report(p, e, "missing 'noise' (quanta per quadrature, referred to the amplifier's input) or 'noise_temperature'");
                    continue;
                }
                if (noiseNode is not null)
                {
                    if (frequencyNode is not null)
                        r.Report(p + ".frequency", frequencyNode, "frequency converts a noise_temperature to quanta; with noise in quanta it is not used");
                    if (r.Number(noiseNode, p + ".noise", Dimension.Dimensionless, 0) is { } n && gain is not null)
                        result.Add(new ChainElement.Amplifier(gain.Value, n));
                    continue;
                }
                double? t = r.Number(temperatureNode, p + ".noise_temperature", Dimension.Temperature, 0);
                double? f = frequencyNode is not null
                    ? r.Number(frequencyNode, p + ".frequency", Dimension.Frequency, 0, minExclusive: true)
                    : readCavity?.FrequencyHz;
                if (frequencyNode is null && readCavity is null)
                    r.Report(p + ".noise_temperature", temperatureNode,
                        "needs a frequency to convert to quanta: no tone couples a cavity to the readout mode; add frequency: (e.g. 6 GHz) or give noise in quanta");
                if (t is not null && f is not null && gain is not null)
                    result.Add(new ChainElement.Amplifier(gain.Value, Physics.NoiseQuanta(t.Value, f.Value), t.Value, f.Value));
            }
            return result.ToImmutable();
        }

        private Jitter JitterOf(YamlNode? node, Dictionary<string, Mode> modes)
        {
            var r = Reader;
            var m = r.Mapping(node, "jitter", "frequency", "coupling", "occupancy");
            if (m is null) return Jitter.None;
            ImmutableDictionary<string, double> PerMode(string key, Dimension dimension, ModeKind? kind)
            {
                var result = ImmutableDictionary.CreateBuilder<string, double>();
                foreach (var (modeName, keyNode, value) in YamlReader.Entries(r.NamedMapping(YamlReader.Get(m, key), "jitter." + key)))
                {
                    string p = $"jitter.{key}.{modeName}";
                    var mode = ModeRef(keyNode, p, modes, kind);
                    if (r.Number(value, p, dimension, 0) is { } v && mode is not null) result[mode.Name] = v;
                }
                return result.ToImmutable();
            }
            return new Jitter(
                PerMode("frequency", Dimension.Frequency, ModeKind.Mechanical),
                r.Number(YamlReader.Get(m, "coupling"), "jitter.coupling", Dimension.Dimensionless, 0, max: 1) ?? 0,
                PerMode("occupancy", Dimension.Dimensionless, null));
        }
    }
}

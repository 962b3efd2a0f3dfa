using System.Collections.Immutable;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;
using Decohere.Analyses.Cooling;
using Decohere.Analyses.Spectra;
using Decohere.Analyses.Ringdown;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting.Joint;

/// <summary>
/// Turns a joint-fit file (YAML: <c>parameters</c>, <c>data</c>) into a <see cref="JointFitProblem"/>, reading every data
/// set, scenario and calibration it names (paths relative to the file). Every problem is collected and reported at once,
/// each with its path, line and column, as the scenario loader does.
/// </summary>
public static class JointFitLoader
{
    /// <summary>Largest fit file read (a real one has a few hundred bytes).</summary>
    public const long MaxFileBytes = 1 << 20;

    /// <summary>The data kinds and the keys each takes.</summary>
    public static readonly ImmutableDictionary<string, ImmutableArray<string>> Kinds = new Dictionary<string, ImmutableArray<string>>
    {
        ["delays"] = ["kind", "file", "scenario", "set", "columns", "delay_unit", "mode", "calibration"],
        ["ringdown"] = ["kind", "file", "set", "time_unit", "sigma"],
        ["cooling"] = ["kind", "file", "scenario", "set", "stage", "tone"],
        ["sidebands"] = ["kind", "file", "scenario", "set", "stage"],
    }.ToImmutableDictionary();

    private static readonly string[] ParameterKeys = ["start", "unit", "prior"];

    /// <summary>Loads and validates a fit file and everything it names.</summary>
    /// <exception cref="ScenarioException">The file, a data set, a scenario or a calibration does not validate; every problem is listed.</exception>
    public static async Task<JointFitProblem> LoadAsync(string path, CancellationToken cancel = default)
    {
        if (!File.Exists(path)) throw new ScenarioException(path, [new ScenarioProblem(path, 0, 0, "file not found")]);
        long length = new FileInfo(path).Length;
        if (length > MaxFileBytes)
            throw new ScenarioException(path, [new ScenarioProblem(path, 0, 0, $"the file has {length} bytes; a joint-fit file has at most {MaxFileBytes}")]);
        return await ParseAsync(await File.ReadAllTextAsync(path, cancel), path, Path.GetDirectoryName(Path.GetFullPath(path))!, cancel);
    }

    /// <summary>Validates fit-file text; relative paths in it are resolved against <paramref name="directory"/>.</summary>
    /// <exception cref="ScenarioException">Something does not validate; every problem is listed.</exception>
    public static async Task<JointFitProblem> ParseAsync(string text, string source, string directory, CancellationToken cancel = default)
    {
        YamlNode root;
        try
        {
            if (ScenarioLoader.TooDeep(text) is { } deep) throw new ScenarioException(source, [deep]);
            var stream = new YamlStream();
            stream.Load(new StringReader(text));
            root = stream.Documents.Count > 0 ? stream.Documents[0].RootNode : new YamlScalarNode("");
        }
        catch (YamlException e)
        {
            string message = (e.InnerException?.Message ?? e.Message).Split('\n')[0];
            throw new ScenarioException(source, [new ScenarioProblem("(yaml)", (int)e.Start.Line, (int)e.Start.Column, $"malformed YAML: {message}")]);
        }
        catch (Exception e) when (e is InvalidOperationException or ArgumentException)
        {
            throw new ScenarioException(source, [new ScenarioProblem("(yaml)", 0, 0, "malformed YAML")]);
        }
        var builder = new Builder(directory);
        var problem = await builder.BuildAsync(root, source, text, cancel);
        if (builder.Reader.Problems.Count > 0 || problem is null)
            throw new ScenarioException(source, [.. builder.Reader.Problems.OrderBy(p => p.Line).ThenBy(p => p.Column)]);
        return problem;
    }

    /// <summary>A parameter as declared in the file.</summary>
    private sealed record Declared(string Name, YamlNode Key, YamlNode? Start, string? Unit, YamlNode? UnitNode, YamlNode? Prior);

    /// <summary>A setting of a data set that a parameter goes into.</summary>
    private sealed record Target(string DataSet, string Key, Dimension Dimension, ParameterDomain Domain, double? DefaultStart, YamlNode Node);

    /// <summary>A data set read from the file, its targets by parameter name, and how to build its term once indices are known.</summary>
    private sealed record Pending(string Name, List<(string Parameter, Target Target)> Uses, Func<Func<string, int>, IJointTerm> Build,
        (FitCalibration Calibration, FitData Raw, string NoiseParameter)? Calibration);

    private sealed class Builder(string directory)
    {
        public YamlReader Reader { get; } = new();

        private readonly List<(string DataSet, string Key, string Parameter, YamlNode Node)> _mentioned = [];

        public async Task<JointFitProblem?> BuildAsync(YamlNode root, string source, string text, CancellationToken cancel)
        {
            var map = Reader.Mapping(root is YamlScalarNode { Value: "" } ? null : root, "", "name", "parameters", "data");
            if (root is YamlScalarNode { Value: "" }) Reader.Report("(file)", null, "the file is empty; a joint-fit file has 'parameters' and 'data'");
            string name = Path.GetFileNameWithoutExtension(source);
            if (YamlReader.Get(map, "name") is { } n && Reader.String(n, "name") is { } given)
            {
                // The name is the default output directory's: no path, as a scenario's name.
                if (System.Text.RegularExpressions.Regex.IsMatch(given, @"^[A-Za-z0-9][A-Za-z0-9 _.+()-]*$") && !given.Contains("..")) name = given;
                else Reader.Report("name", n, $"'{YamlReader.Shorten(given)}' is not allowed: letters, digits, spaces and - _ . + ( ), starting with a letter or digit");
            }
            var declared = Parameters(Reader.NamedMapping(Reader.Required(map, "", "parameters", "the joint parameter vector"), "parameters"));
            var sets = new List<Pending>();
            foreach (var (set, _, value) in YamlReader.Entries(Reader.NamedMapping(Reader.Required(map, "", "data", "the data sets"), "data")))
                if (await DataSet(set, value, cancel) is { } pending) sets.Add(pending);
            if (map is not null && sets.Count == 0 && Reader.Problems.Count == 0) Reader.Report("data", map, "no data set; give at least one under 'data'");

            var names = declared.Select(d => d.Name).ToList();
            var byName = declared.ToDictionary(d => d.Name);
            var uses = sets.SelectMany(s => s.Uses).ToList();
            // Every setting a data set leaves unmapped that has no value of its own becomes that data set's own parameter.
            foreach (var (parameter, target) in uses.Where(u => !byName.ContainsKey(u.Parameter) && u.Parameter.StartsWith(u.Target.DataSet + ".", StringComparison.Ordinal)))
                if (!names.Contains(parameter)) names.Add(parameter);
            // Checked on every mapping written, also of data sets that failed to load, so one bad file does not make its
            // parameters look unused.
            foreach (var (set, key, parameter, node) in _mentioned)
                if (!names.Contains(parameter) && !parameter.StartsWith(set + ".", StringComparison.Ordinal))
                    Reader.Report($"data.{set}.set.{key}", node,
                        $"unknown parameter '{parameter}'{NameSuggestion.Suggest(parameter, declared.Select(d => d.Name).ToArray())}; parameters: {string.Join(", ", declared.Select(d => d.Name))}");
            foreach (var d in declared.Where(d => _mentioned.All(u => u.Parameter != d.Name)))
                Reader.Report($"parameters.{d.Name}", d.Key, $"parameter '{d.Name}' is not used by any data set; map it in a data set's 'set' or remove it");

            var parameters = new List<JointParameter>();
            var priors = new List<(int, FitPrior)>();
            foreach (string p in names)
            {
                var targets = uses.Where(u => u.Parameter == p).Select(u => u.Target).ToList();
                if (targets.Count == 0) continue;
                if (Parameter(p, byName.GetValueOrDefault(p), targets) is { } jp)
                {
                    if (jp.Prior is { } prior) priors.Add((parameters.Count, prior));
                    parameters.Add(jp);
                }
            }
            var calibrations = new List<JointCalibration>();
            for (int k = 0; k < sets.Count; k++)
            {
                if (sets[k].Calibration is not { } c) continue;
                int index = parameters.FindIndex(q => q.Name == c.NoiseParameter);
                if (index < 0) continue;
                calibrations.Add(new JointCalibration(k, c.Calibration, c.Raw));
                // A prior stated in the file wins over the calibration's, as --prior does for fit.
                if (!priors.Any(q => q.Item1 == index))
                    priors.Add((index, new FitPrior(c.NoiseParameter, c.Calibration.AddedNoise, c.Calibration.AddedNoiseSd, null, null)));
            }
            if (Reader.Problems.Count > 0) return null;
            int IndexOf(string parameter) => parameters.FindIndex(q => q.Name == parameter);
            return new JointFitProblem(name, source, text, [.. parameters], [.. sets.Select(s => s.Build(IndexOf))], [.. priors], [.. calibrations]);
        }

        private List<Declared> Parameters(YamlMappingNode? map)
        {
            var list = new List<Declared>();
            foreach (var (name, key, value) in YamlReader.Entries(map))
            {
                string path = $"parameters.{name}";
                if (value is YamlScalarNode { Value: null or "" or "~" })
                {
                    list.Add(new Declared(name, key, null, null, null, null));
                    continue;
                }
                var spec = Reader.Mapping(value, path, ParameterKeys);
                string? unit = YamlReader.Get(spec, "unit") is { } u ? Reader.String(u, path + ".unit") : null;
                list.Add(new Declared(name, key, YamlReader.Get(spec, "start"), unit, YamlReader.Get(spec, "unit"), YamlReader.Get(spec, "prior")));
            }
            return list;
        }

        private JointParameter? Parameter(string name, Declared? declared, List<Target> targets)
        {
            string path = $"parameters.{name}";
            var dimension = targets[0].Dimension;
            double scale = 1;
            if (declared?.Unit is { } unit)
            {
                var found = Enum.GetValues<Dimension>().Where(d => d != Dimension.Dimensionless)
                    .Select(d => (d, ok: Quantity.TryParse("1 " + unit, d, out double f, out _), f)).FirstOrDefault(x => x.ok);
                if (!found.ok) { Reader.Report(path + ".unit", declared.UnitNode, $"unknown unit '{unit}'; allowed: {string.Join(", ", AllUnits())}"); return null; }
                (dimension, scale) = (found.d, found.f);
            }
            else if (declared?.Start is YamlScalarNode { Value: { } startText } && !Quantity.TryParse(startText, Dimension.Dimensionless, out _, out _))
            {
                // A start with a unit fixes the dimension.
                var found = Enum.GetValues<Dimension>().FirstOrDefault(d => Quantity.TryParse(startText, d, out _, out _), Dimension.Dimensionless);
                if (found != Dimension.Dimensionless) dimension = found;
            }
            bool ok = true;
            foreach (var t in targets.Where(t => t.Dimension != dimension))
            {
                Reader.Report($"data.{t.DataSet}.set.{t.Key}", t.Node,
                    $"parameter '{name}' is {Describe(dimension)}, but {t.Key} takes {Describe(t.Dimension)}");
                ok = false;
            }
            if (!ok) return null;
            double? Value(string text, YamlNode node, string where)
            {
                if (Quantity.TryParse(text, Dimension.Dimensionless, out double bare, out _)) return bare * scale;
                if (Quantity.TryParse(text, dimension, out double v, out string? error)) return v;
                Reader.Report(where, node, error!);
                return null;
            }
            var domain = targets.Any(t => t.Domain == ParameterDomain.Positive) ? ParameterDomain.Positive
                : targets.All(t => t.Domain == ParameterDomain.Real) ? ParameterDomain.Real : ParameterDomain.NonNegative;
            double? start = null;
            if (declared?.Start is { } startNode)
            {
                if (Reader.String(startNode, path + ".start") is not { } startText || Value(startText, startNode, path + ".start") is not { } given) return null;
                start = given;
            }
            FitPrior? prior = null;
            if (declared?.Prior is { } priorNode)
            {
                if (Reader.String(priorNode, path + ".prior") is not { } priorText) return null;
                string where = path + ".prior";
                string[] gaussian = priorText.Split(["±", "+-"], StringSplitOptions.TrimEntries);
                string[] bounds = priorText.Split("..", StringSplitOptions.TrimEntries);
                if (gaussian.Length == 2)
                {
                    if (Value(gaussian[0], priorNode, where) is not { } mean || Value(gaussian[1], priorNode, where) is not { } sd) return null;
                    if (!(sd > 0)) { Reader.Report(where, priorNode, $"the standard deviation must be > 0 (got {sd})"); return null; }
                    prior = new FitPrior(name, mean, sd, null, null);
                }
                else if (bounds.Length == 2)
                {
                    if (Value(bounds[0], priorNode, where) is not { } low || Value(bounds[1], priorNode, where) is not { } high) return null;
                    if (!(low < high)) { Reader.Report(where, priorNode, $"the lower bound must be below the upper ({low} .. {high})"); return null; }
                    prior = new FitPrior(name, null, null, low, high);
                }
                else
                {
                    Reader.Report(where, priorNode, $"'{priorText}' must be MEAN ± SD (or MEAN +- SD) or LOW..HIGH, in the parameter's units");
                    return null;
                }
            }
            // A bounded prior needs a start inside its bounds, or the optimiser starts on an infinite plateau.
            if (prior is { IsGaussian: false } && (start is null || prior.Minus2LogPrior(start.Value) > 0))
                start = prior.Low > 0 ? Math.Sqrt(prior.Low!.Value * prior.High!.Value) : 0.5 * (prior.Low!.Value + prior.High!.Value);
            // Without a start: a Gaussian prior's mean, else the value of the first setting it goes into.
            start ??= prior?.Mean ?? targets.Select(t => t.DefaultStart).FirstOrDefault(v => v is not null);
            if (start is not { } x0 || !(domain == ParameterDomain.Real || x0 > 0))
                start = dimension switch { Dimension.Temperature => 0.01, Dimension.Frequency => 1, Dimension.Time => 1e-3, _ => 0.1 };
            return new JointParameter(name, dimension, start!.Value, domain, prior,
                [.. targets.Select(t => t.DataSet).Distinct()], [.. targets.Select(t => $"{t.DataSet}: {t.Key}")]);
        }

        private static IEnumerable<string> AllUnits() => Enum.GetValues<Dimension>().SelectMany(Quantity.UnitsOf);

        private static string Describe(Dimension d) => d == Dimension.Dimensionless ? "a plain number" : $"a {d.ToString().ToLowerInvariant()} ({Quantity.SiUnit(d)})";

        private string Resolve(string file) => Path.Combine(directory, file);

        private async Task<Pending?> DataSet(string name, YamlNode value, CancellationToken cancel)
        {
            string path = $"data.{name}";
            if (name.Contains('.') || name.Length == 0)
            {
                Reader.Report(path, value, $"data set name '{name}' must not contain '.' (it prefixes the data set's own parameters)");
                return null;
            }
            var kindNode = value is YamlMappingNode m0 ? YamlReader.Get(m0, "kind") : null;
            if (value is YamlMappingNode && kindNode is null) Reader.Report(path + ".kind", value, $"missing field 'kind' ({string.Join(" | ", Kinds.Keys.Order())})");
            string? kind = kindNode is null ? null : Reader.String(kindNode, path + ".kind");
            if (kind is not null && !Kinds.ContainsKey(kind))
            {
                var allowed = Kinds.Keys.Order().ToArray();
                Reader.Report(path + ".kind", kindNode, $"'{kind}' is not allowed{NameSuggestion.Suggest(kind, allowed)}; allowed: {string.Join(" | ", allowed)}");
                kind = null;
            }
            var map = Reader.Mapping(value, path, kind is null ? [.. Kinds.Values.SelectMany(k => k).Distinct()] : [.. Kinds[kind]]);
            if (map is null) return null;
            var set = Reader.NamedMapping(YamlReader.Get(map, "set"), path + ".set");
            var mapped = new List<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)>();
            foreach (var (key, keyNode, target) in YamlReader.Entries(set))
                if (Reader.String(target, $"{path}.set.{key}") is { } parameter)
                {
                    mapped.Add((key, keyNode, parameter, target));
                    _mentioned.Add((name, key, parameter, target));
                }
            if (kind is null) return null;
            var fileNode = Reader.Required(map, path, "file", "the data file, CSV, Parquet or HDF5 FILE.h5:/group, relative to this file");
            string? file = fileNode is null ? null : Reader.String(fileNode, path + ".file");
            Scenario? scenario = null;
            if (kind is "delays" or "cooling" or "sidebands")
            {
                var scenarioNode = Reader.Required(map, path, "scenario", "the scenario file that models the data, relative to this file");
                if (scenarioNode is not null && Reader.String(scenarioNode, path + ".scenario") is { } scenarioFile)
                    scenario = LoadScenario(Resolve(scenarioFile), scenarioFile, path + ".scenario", scenarioNode);
            }
            if (file is null) return null;
            try
            {
                return kind switch
                {
                    "delays" => scenario is null ? null : await Delays(name, path, map, Resolve(file), scenario, mapped, cancel),
                    "ringdown" => await Ringdown(name, path, map, Resolve(file), mapped, cancel),
                    "sidebands" => scenario is null ? null : await Sidebands(name, path, map, Resolve(file), scenario, mapped, cancel),
                    _ => scenario is null ? null : await Cooling(name, path, map, Resolve(file), scenario, mapped, cancel),
                };
            }
            catch (InputException e)
            {
                Reader.Report(path + ".file", fileNode, e.Message);
                return null;
            }
        }

        private Scenario? LoadScenario(string resolved, string written, string path, YamlNode node)
        {
            try
            {
                return ScenarioLoader.Load(resolved);
            }
            catch (ScenarioException e)
            {
                foreach (var p in e.Problems)
                    Reader.Report(path, node, $"{written}{(p.Line > 0 ? $" (line {p.Line}, column {p.Column})" : "")}: {(p.Path == resolved ? "" : p.Path + ": ")}{p.Message}");
                return null;
            }
        }

        /// <summary>The scenario paths of a data set's mapping; unknown paths are reported at their key.</summary>
        private List<(string Parameter, Target Target, ParameterPath Path)> ScenarioTargets(string name, string path, Scenario scenario,
            IEnumerable<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)> mapped)
        {
            var list = new List<(string, Target, ParameterPath)>();
            foreach (var (key, keyNode, parameter, node) in mapped)
            {
                try
                {
                    var p = ParameterPath.Parse(key, scenario);
                    if (p.Text == "readout.shots")
                    {
                        Reader.Report($"{path}.set.{key}", keyNode, "readout.shots is a count, not a continuous parameter; it cannot be fitted");
                        continue;
                    }
                    var domain = p.MustBePositive ? ParameterDomain.Positive : p.IsSigned ? ParameterDomain.Real : ParameterDomain.NonNegative;
                    double current = p.Get(scenario);
                    list.Add((parameter, new Target(name, key, p.Dimension, domain, double.IsFinite(current) && current > 0 ? current : null, node), p));
                }
                catch (InputException e)
                {
                    Reader.Report($"{path}.set.{key}", keyNode, e.Message);
                }
            }
            return list;
        }

        private async Task<Pending?> Delays(string name, string path, YamlMappingNode map, string file, Scenario scenario,
            List<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)> mapped, CancellationToken cancel)
        {
            var columns = new List<string>();
            foreach (var (column, _, v) in YamlReader.Entries(Reader.NamedMapping(YamlReader.Get(map, "columns"), path + ".columns")))
                if (Reader.String(v, $"{path}.columns.{column}") is { } fileColumn) columns.Add($"{column}={fileColumn}");
            string? delayUnit = YamlReader.Get(map, "delay_unit") is { } du ? Reader.String(du, path + ".delay_unit") : null;
            string? mode = YamlReader.Get(map, "mode") is { } mn ? Reader.String(mn, path + ".mode") : null;
            DataOptions options;
            try
            {
                options = DataOptions.Parse(columns, delayUnit, mode);
            }
            catch (InputException e)
            {
                Reader.Report(path + (delayUnit is not null && e.Message.StartsWith("delay unit", StringComparison.Ordinal) ? ".delay_unit" : ".columns"), map, e.Message);
                return null;
            }
            if (scenario.Readout is null)
            {
                Reader.Report(path + ".scenario", map, $"scenario '{scenario.Name}' has no readout block: delay data need readout.mode and readout.stage");
                return null;
            }
            var targets = ScenarioTargets(name, path, scenario, mapped);
            var raw = await FitDataReader.ReadAsync(file, scenario, options, cancel);
            foreach (var (_, t, p) in targets)
                if (p.Text.StartsWith("readout.", StringComparison.Ordinal) && raw.Shape == DataShape.Occupancies)
                    Reader.Report($"{path}.set.{t.Key}", t.Node, $"{p.Text} does not enter occupancy data (occupancies are already noise-subtracted)");
            (FitCalibration, FitData, string)? calibration = null;
            var data = raw;
            if (YamlReader.Get(map, "calibration") is { } calNode && Reader.String(calNode, path + ".calibration") is { } calFile)
            {
                string? noise = targets.FirstOrDefault(t => t.Path.Text == "readout.added_noise").Parameter;
                try
                {
                    var c = CalibrationFile.Read(Resolve(calFile));
                    if (raw.Shape == DataShape.Occupancies)
                        Reader.Report(path + ".calibration", calNode, "occupancy data are already in quanta; a calibration converts shots or variances");
                    else if (noise is null)
                        Reader.Report(path + ".calibration", calNode, "a calibration's added noise is a prior on readout.added_noise: map readout.added_noise to a parameter in 'set'");
                    else
                    {
                        data = FitCalibration.ToQuanta(raw, c.Gain);
                        calibration = (c, raw, noise);
                    }
                }
                catch (InputException e)
                {
                    Reader.Report(path + ".calibration", calNode, e.Message);
                }
            }
            var uses = targets.Select(t => (t.Parameter, t.Target)).ToList();
            if (uses.Count == 0) Reader.Report(path + ".set", map, "no parameter is set: map at least one scenario path to a parameter");
            return new Pending(name, uses, index => new DelayTerm(name, scenario, data, [.. targets.Select(t => (t.Path, index(t.Parameter)))]), calibration);
        }

        private async Task<Pending?> Ringdown(string name, string path, YamlMappingNode map, string file,
            List<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)> mapped, CancellationToken cancel)
        {
            double scale = 1;
            if (YamlReader.Get(map, "time_unit") is { } tu && Reader.String(tu, path + ".time_unit") is { } unit
                && !Quantity.TryParse("1 " + unit, Dimension.Time, out scale, out _))
            {
                Reader.Report(path + ".time_unit", tu, $"unknown time unit '{unit}'; allowed: {string.Join(", ", Quantity.UnitsOf(Dimension.Time))}");
                return null;
            }
            double? sigma = YamlReader.Get(map, "sigma") is { } sn ? Reader.Number(sn, path + ".sigma", Dimension.Dimensionless, 0, minExclusive: true) : null;
            foreach (var m in mapped.Where(m => !RingdownTerm.Keys.Contains(m.Key)))
                Reader.Report($"{path}.set.{m.Key}", m.KeyNode, $"unknown key '{m.Key}'{NameSuggestion.Suggest(m.Key, [.. RingdownTerm.Keys])}; a ring-down sets: {string.Join(", ", RingdownTerm.Keys)}");
            var data = await LabDataReader.ReadRingdownAsync(file, scale, sigma, cancel);
            RingdownAnalysis.Check(data);
            var starts = RingdownAnalysis.Parameters(data);
            // The ring-down's own order is (initial, γ, floor); its keys are (linewidth Hz, initial, floor).
            (Dimension, ParameterDomain, double)[] own =
            [
                (Dimension.Frequency, ParameterDomain.Positive, starts[1].Start / (2 * Math.PI)),
                (Dimension.Dimensionless, ParameterDomain.Positive, starts[0].Start),
                (Dimension.Dimensionless, ParameterDomain.NonNegative, starts[2].Start),
            ];
            var uses = new List<(string, Target)>();
            var parameters = new string[3];
            for (int k = 0; k < 3; k++)
            {
                string key = RingdownTerm.Keys[k];
                var m = mapped.FirstOrDefault(x => x.Key == key);
                parameters[k] = m.Parameter ?? $"{name}.{key}";
                uses.Add((parameters[k], new Target(name, key, own[k].Item1, own[k].Item2, own[k].Item3, m.Node ?? map)));
            }
            return new Pending(name, uses, index => new RingdownTerm(name, data, [.. parameters.Select(index)]), null);
        }

        private async Task<Pending?> Cooling(string name, string path, YamlMappingNode map, string file, Scenario scenario,
            List<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)> mapped, CancellationToken cancel)
        {
            string? stageName = YamlReader.Get(map, "stage") is { } sn ? Reader.String(sn, path + ".stage") : null;
            long? tone = YamlReader.Get(map, "tone") is { } tn ? Reader.Integer(tn, path + ".tone", 0, 1000) : null;
            int stage, toneIndex;
            try
            {
                (stage, toneIndex) = CoolingAnalysis.Locate(scenario, new CoolingSettings { Stage = stageName, Tone = (int?)tone });
            }
            catch (InputException e)
            {
                Reader.Report(path + (e.Message.StartsWith("tone", StringComparison.Ordinal) ? ".tone" : ".stage"), map, e.Message);
                return null;
            }
            var targets = ScenarioTargets(name, path, scenario, mapped.Where(m => !CoolingTerm.HeatingKeys.Contains(m.Key)));
            var points = await LabDataReader.ReadCoolingAsync(file, cancel);
            if (points.Count == 0) throw new InputException($"data file {Path.GetFileName(file)}: no rows; a cooling curve needs at least one (cooperativity, occupancy) point");
            double[] start = CoolingAnalysis.HeatingStart(scenario, stage, toneIndex, new CoolingSettings(), points);
            var uses = targets.Select(t => (t.Parameter, t.Target)).ToList();
            var heating = new string[2];
            for (int k = 0; k < 2; k++)
            {
                string key = CoolingTerm.HeatingKeys[k];
                var m = mapped.FirstOrDefault(x => x.Key == key);
                heating[k] = m.Parameter ?? $"{name}.{key}";
                uses.Add((heating[k], new Target(name, key, Dimension.Dimensionless, ParameterDomain.Positive, start[k], m.Node ?? map)));
            }
            return new Pending(name, uses, index => new CoolingTerm(name, Path.GetFileName(file), scenario, stage, toneIndex, [.. points],
                [.. targets.Select(t => (t.Path, index(t.Parameter)))], [.. heating.Select(index)]), null);
        }

        private async Task<Pending?> Sidebands(string name, string path, YamlMappingNode map, string file, Scenario scenario,
            List<(string Key, YamlScalarNode KeyNode, string Parameter, YamlNode Node)> mapped, CancellationToken cancel)
        {
            string? stageName = YamlReader.Get(map, "stage") is { } sn ? Reader.String(sn, path + ".stage") : null;
            if (scenario.Model != ModelKind.Full)
            {
                Reader.Report(path + ".scenario", YamlReader.Get(map, "scenario") ?? map, $"scenario '{scenario.Name}' has model: effective; sideband powers come from the cavity's output, which needs model: full");
                return null;
            }
            (int Stage, int Red, int Blue) pair;
            try
            {
                pair = SpectrumAnalysis.AsymmetryPair(scenario, stageName);
            }
            catch (InputException e)
            {
                Reader.Report(path + ".stage", YamlReader.Get(map, "stage") ?? map, e.Message);
                return null;
            }
            var targets = ScenarioTargets(name, path, scenario, mapped);
            var points = await LabDataReader.ReadSidebandsAsync(file, cancel);
            if (points.Count == 0) throw new InputException($"data file {Path.GetFileName(file)}: no rows; a sideband asymmetry needs at least one (ratio, ratio_err) point");
            return new Pending(name, [.. targets.Select(t => (t.Parameter, t.Target))], index => new SidebandTerm(name, Path.GetFileName(file), scenario, pair, [.. points],
                [.. targets.Select(t => (t.Path, index(t.Parameter)))]), null);
        }
    }
}

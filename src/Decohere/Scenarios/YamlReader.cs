using System.Globalization;
using YamlDotNet.RepresentationModel;
using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>
/// Typed access to a YAML tree that records every problem (path, line, column) instead of stopping at the first.
/// </summary>
internal sealed class YamlReader
{
    private readonly List<ScenarioProblem> _problems = [];

    public IReadOnlyList<ScenarioProblem> Problems => _problems;

    // Where each number was read, so checks across fields can point at the one to change.
    private readonly Dictionary<string, YamlNode> _numbers = [];

    /// <summary>The node a number at <paramref name="path"/> was read from, or null.</summary>
    public YamlNode? NumberNode(string path) => _numbers.GetValueOrDefault(path);

    public void Report(string path, YamlNode? node, string message)
    {
        int line = node is null ? 0 : (int)node.Start.Line;
        int column = node is null ? 0 : (int)node.Start.Column;
        _problems.Add(new ScenarioProblem(path, line, column, message));
    }

    /// <summary>The node as a mapping whose keys are all in <paramref name="allowed"/>; unknown keys are reported with the nearest valid name.</summary>
    public YamlMappingNode? Mapping(YamlNode? node, string path, params string[] allowed)
    {
        if (node is null) return null;
        if (node is not YamlMappingNode map)
        {
            Report(path, node, $"expected a mapping with keys {string.Join(", ", allowed)}");
            return null;
        }
        foreach (var key in map.Children.Keys)
        {
            if (key is not YamlScalarNode scalar)
            {
                Report(path, key, NonScalarKey(allowed));
                continue;
            }
            string name = scalar.Value ?? "";
            if (allowed.Length > 0 && !allowed.Contains(name))
                Report(Join(path, name), key, $"unknown key '{name}'{NameSuggestion.Suggest(name, allowed)}; allowed: {string.Join(", ", allowed)}");
        }
        return map;
    }

    /// <summary>A mapping whose keys are user-chosen names (modes, per-mode overrides).</summary>
    public YamlMappingNode? NamedMapping(YamlNode? node, string path)
    {
        if (node is null) return null;
        if (node is YamlMappingNode map)
        {
            foreach (var key in map.Children.Keys)
                if (key is not YamlScalarNode) Report(path, key, NonScalarKey([]));
            return map;
        }
        Report(path, node, "expected a mapping of names");
        return null;
    }

    /// <summary>The entries of a mapping whose key is a plain name; the others were reported by <see cref="Mapping"/> or <see cref="NamedMapping"/>.</summary>
    public static IEnumerable<(string Name, YamlScalarNode Key, YamlNode Value)> Entries(YamlMappingNode? map)
    {
        if (map is null) yield break;
        foreach (var (key, value) in map.Children)
            if (key is YamlScalarNode scalar) yield return (scalar.Value ?? "", scalar, value);
    }

    private static string NonScalarKey(string[] allowed) =>
        "a key must be a plain name, not a list or mapping (a '?' complex key)" + (allowed.Length > 0 ? $"; allowed: {string.Join(", ", allowed)}" : "");

    public YamlSequenceNode? Sequence(YamlNode? node, string path)
    {
        if (node is null) return null;
        if (node is YamlSequenceNode seq) return seq;
        Report(path, node, "expected a list");
        return null;
    }

    public static YamlNode? Get(YamlMappingNode? map, string key) =>
        map is not null && map.Children.TryGetValue(new YamlScalarNode(key), out var v) ? v : null;

    public static bool Has(YamlMappingNode? map, string key) => Get(map, key) is not null;

    public YamlNode? Required(YamlMappingNode? map, string path, string key, string what)
    {
        if (map is null) return null;
        var node = Get(map, key);
        if (node is null) Report(Join(path, key), map, $"missing field '{key}' ({what})");
        return node;
    }

    public string? String(YamlNode? node, string path)
    {
        if (node is null) return null;
        if (node is YamlScalarNode s && !string.IsNullOrWhiteSpace(s.Value)) return s.Value!.Trim();
        Report(path, node, "expected a non-empty text value");
        return null;
    }

    public T? Enum<T>(YamlNode? node, string path, params (string Name, T Value)[] choices) where T : struct
    {
        string? text = String(node, path);
        if (text is null) return null;
        foreach (var (name, value) in choices)
            if (name == text) return value;
        string[] names = choices.Select(c => c.Name).ToArray();
        Report(path, node, $"'{text}' is not allowed{NameSuggestion.Suggest(text, names)}; allowed: {string.Join(" | ", names)}");
        return null;
    }

    public bool? Bool(YamlNode? node, string path)
    {
        string? text = String(node, path);
        if (text is null) return null;
        if (text is "true" or "yes" or "on") return true;
        if (text is "false" or "no" or "off") return false;
        Report(path, node, $"'{text}' is not allowed; allowed: true | false");
        return null;
    }

    /// <summary>A quantity in SI units, with optional bounds (inclusive unless stated).</summary>
    public double? Number(YamlNode? node, string path, Dimension dimension,
        double min = double.NegativeInfinity, bool minExclusive = false, double max = double.PositiveInfinity)
    {
        if (node is null) return null;
        if (node is not YamlScalarNode scalar || scalar.Value is null)
        {
            Report(path, node, $"expected a {Describe(dimension)}");
            return null;
        }
        if (!Quantity.TryParse(scalar.Value, dimension, out double value, out string? error))
        {
            Report(path, node, error!);
            return null;
        }
        bool tooLow = minExclusive ? value <= min : value < min;
        if (tooLow || value > max)
        {
            string unit = Quantity.SiUnit(dimension);
            string low = double.IsNegativeInfinity(min) ? "" : (minExclusive ? $"> {Fmt(min)}" : $">= {Fmt(min)}");
            string high = double.IsPositiveInfinity(max) ? "" : $"<= {Fmt(max)}";
            string range = string.Join(" and ", new[] { low, high }.Where(s => s.Length > 0));
            Report(path, node, $"{scalar.Value} is out of range: must be {range}{(unit.Length > 0 ? " " + unit : "")}");
            return null;
        }
        _numbers[path] = node;
        return value;
    }

    /// <summary>A whole number in [min, max], written plainly (20000000) or in exponent form (2e7) as long as it is exact.</summary>
    public long? Integer(YamlNode? node, string path, long min = long.MinValue, long max = long.MaxValue)
    {
        if (node is null) return null;
        string? text = String(node, path);
        if (text is null) return null;
        string range = $"must be a whole number from {min} to {max}";
        // Only the number syntax of quantities (ASCII digits, bounded length); decimal holds every long exactly.
        if (!Quantity.TryParse(text, Dimension.Dimensionless, out double approximate, out _))
        {
            Report(path, node, $"'{Shorten(text)}' is not a whole number; {range}");
            return null;
        }
        if (approximate < min || approximate > max
            || !decimal.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out decimal exact))
        {
            Report(path, node, $"{Shorten(text)} is out of range: {range}");
            return null;
        }
        if (exact != decimal.Truncate(exact) || approximate != Math.Floor(approximate))
        {
            Report(path, node, $"'{Shorten(text)}' is not a whole number; {range}");
            return null;
        }
        if (exact < min || exact > max)
        {
            Report(path, node, $"{Shorten(text)} is out of range: {range}");
            return null;
        }
        return (long)exact;
    }

    /// <summary>Long values quoted in messages are cut, so one bad scalar cannot flood the terminal.</summary>
    public static string Shorten(string text) => text.Length <= 40 ? text : text[..37] + "...";

    private static string Describe(Dimension d) => d == Dimension.Dimensionless ? "number" : $"{d.ToString().ToLowerInvariant()} (number with unit)";

    private static string Fmt(double v) => v.ToString("G6", CultureInfo.InvariantCulture);

    public static string Join(string path, string key) => path.Length == 0 ? key : $"{path}.{key}";
}

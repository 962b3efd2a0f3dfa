using System.Text.Json.Nodes;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.IO;

/// <summary>Reads the fitted values of a fit.json or joint-fit.json, with their errors and correlations, for planning with them.</summary>
public static class FitResultFile
{
    /// <summary>
    /// The fitted scenario values of <c>FILE</c> or <c>FILE:SET</c>. A fit.json gives its <c>parameters</c> (keyed by path,
    /// value and stderr in SI units); a joint-fit.json gives the <c>scenario_values</c> of its data sets (or of data set SET),
    /// each path's error being that of the joint parameter it was set from. Correlations come from the file's matrix.
    /// </summary>
    /// <exception cref="InputException">The file is missing, not JSON, holds no fitted values, or a path is fitted differently by two data sets.</exception>
    public static MeasuredValues Read(string spec)
    {
        var (path, set) = Split(spec);
        string name = Path.GetFileName(path) + (set is null ? "" : ":" + set);
        var root = JsonInput.Read(path, "fitted values");
        // Each value with the name of the fitted parameter it came from, for the correlation matrix.
        var entries = root?["data_sets"] is JsonObject sets ? Joint(root, sets, set, name) : Plain(root, set, name);
        var order = (root?["correlation"]?["parameters"] as JsonArray)?.Select(o => (string?)o).ToList();
        var matrix = root?["correlation"]?["matrix"] as JsonArray;
        double[,]? correlation = null;
        if (order is not null && matrix is not null && matrix.Count == order.Count)
        {
            correlation = new double[entries.Count, entries.Count];
            for (int i = 0; i < entries.Count; i++)
                for (int j = 0; j < entries.Count; j++)
                {
                    int a = order.IndexOf(entries[i].Parameter), b = order.IndexOf(entries[j].Parameter);
                    correlation[i, j] = a < 0 || b < 0 ? double.NaN : JsonInput.Number((matrix[a] as JsonArray)?.ElementAtOrDefault(b)) ?? double.NaN;
                }
        }
        return MeasuredValues.From([.. entries.Select(e => e.Value)], correlation);
    }

    private static List<(MeasuredValue Value, string Parameter)> Plain(JsonNode? root, string? set, string name)
    {
        if (set is not null) throw new InputException($"fitted values {name}: ':{set}' names a data set, which only a joint-fit.json has");
        if (root?["parameters"] is not JsonObject parameters || parameters.Count == 0)
            throw new InputException($"fitted values {name}: no 'parameters' object of fitted values (a fit.json written by decohere fit)");
        return [.. parameters.Select(p => (Value(name, p.Key, p.Value, p.Value?["stderr"]), p.Key))];
    }

    private static List<(MeasuredValue Value, string Parameter)> Joint(JsonNode root, JsonObject sets, string? set, string name)
    {
        var chosen = sets.Where(s => set is null || s.Key == set).Where(s => s.Value?["scenario_values"] is JsonObject).ToList();
        if (set is not null && chosen.Count == 0)
            throw new InputException($"fitted values {name}: no data set '{set}' with scenario values; data sets: {string.Join(", ", sets.Select(s => s.Key))}");
        if (chosen.Count == 0) throw new InputException($"fitted values {name}: no data set has scenario values");
        var entries = new List<(MeasuredValue Value, string Parameter, string Set)>();
        foreach (var (setName, node) in chosen)
            foreach (var (path, value) in node!["scenario_values"]!.AsObject())
            {
                string parameter = (string?)node["set"]?[path] ?? path;
                if (entries.FirstOrDefault(e => e.Value.Path == path) is { Value: not null } seen)
                {
                    if (seen.Parameter != parameter)
                        throw new InputException($"fitted values {name}: {path} is fitted as '{seen.Parameter}' in data set {seen.Set} and as '{parameter}' in {setName}; choose one with {name}:SET");
                    continue;
                }
                entries.Add((Value(name, path, value, root["parameters"]?[parameter]?["stderr"]), parameter, setName));
            }
        return [.. entries.Select(e => (e.Value, e.Parameter))];
    }

    private static MeasuredValue Value(string name, string path, JsonNode? node, JsonNode? stderr) =>
        new(path, JsonInput.Number(node?["value"]) ?? throw new InputException($"fitted values {name}: {path}: value must be a finite number"), JsonInput.Number(stderr) ?? double.NaN, name);

    // FILE:SET when FILE exists and the whole does not (a path may itself hold a colon).
    private static (string Path, string? Set) Split(string spec)
    {
        int colon = spec.LastIndexOf(':');
        return !File.Exists(spec) && colon > 0 && File.Exists(spec[..colon]) ? (spec[..colon], spec[(colon + 1)..]) : (spec, null);
    }
}

using System.Text.Json;
using System.Text.Json.Nodes;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.IO;

/// <summary>Reads the fitted values of a fit.json, with their errors, for planning with them.</summary>
public static class FitResultFile
{
    /// <summary>
    /// The fitted parameters of a fit.json (<c>parameters</c> keyed by path: value and stderr in SI units) with the correlation
    /// matrix of their errors.
    /// </summary>
    /// <exception cref="InputException">The file is missing, not JSON, or holds no fitted parameters.</exception>
    public static MeasuredValues Read(string path)
    {
        string name = Path.GetFileName(path);
        var root = Parse(path, "fitted values");
        if (root?["parameters"] is not JsonObject parameters || parameters.Count == 0)
            throw new InputException($"fitted values {name}: no 'parameters' object of fitted values (a fit.json written by decohere fit)");
        var values = new List<MeasuredValue>();
        foreach (var (key, node) in parameters)
        {
            double? value = Number(node?["value"]), sd = Number(node?["stderr"]);
            if (value is null) throw new InputException($"fitted values {name}: parameters.{key}.value must be a finite number");
            values.Add(new MeasuredValue(key, value.Value, sd ?? double.NaN, name));
        }
        double[,]? correlation = null;
        if (root["correlation"] is JsonObject c && c["parameters"] is JsonArray order && c["matrix"] is JsonArray rows && order.Count == values.Count && rows.Count == values.Count)
        {
            var index = order.Select(o => values.FindIndex(v => v.Path == (string?)o)).ToArray();
            if (index.All(i => i >= 0))
            {
                correlation = new double[values.Count, values.Count];
                for (int i = 0; i < rows.Count; i++)
                    for (int j = 0; j < rows.Count; j++) correlation[index[i], index[j]] = Number((rows[i] as JsonArray)?.ElementAtOrDefault(j)) ?? double.NaN;
            }
        }
        return MeasuredValues.From(values, correlation);
    }

    private static JsonNode? Parse(string path, string what)
    {
        if (!File.Exists(path)) throw new InputException($"{what} {path}: not found");
        try
        {
            return JsonNode.Parse(File.ReadAllText(path));
        }
        catch (JsonException e)
        {
            throw new InputException($"{what} {Path.GetFileName(path)}: not JSON ({e.Message.Split('\n')[0]})");
        }
    }

    private static double? Number(JsonNode? node)
    {
        try
        {
            return node is JsonValue v && v.TryGetValue(out double d) && double.IsFinite(d) ? d : null;
        }
        catch (InvalidOperationException)
        {
            return null;
        }
    }
}

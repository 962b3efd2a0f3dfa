using System.Globalization;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace Decohere.Tests.Scenarios;

/// <summary>
/// A validator for the part of JSON Schema draft 2020-12 that scenarios/scenario.schema.json uses ($ref into $defs, type,
/// enum, pattern, minimum, maximum, multipleOf, properties, required, additionalProperties, propertyNames, maxProperties,
/// items, minItems, maxItems, anyOf), applied to YAML the way editors read it: plain scalars typed by the YAML 1.2 core
/// schema (json-schema.org/draft/2020-12/json-schema-validation; yaml.org/spec/1.2.2 §10.3.2). Any other keyword throws,
/// so the schema cannot silently use more than this checks.
/// </summary>
internal static class SchemaValidator
{
    private static readonly HashSet<string> Annotations = ["$schema", "$id", "title", "description", "$defs"];

    public static List<string> Validate(JsonObject schema, string yaml)
    {
        var stream = new YamlStream();
        stream.Load(new StringReader(yaml));
        var errors = new List<string>();
        Check(schema, schema, stream.Documents[0].RootNode, "", errors);
        return errors;
    }

    private static void Check(JsonObject root, JsonObject s, YamlNode node, string path, List<string> errors)
    {
        foreach (var (keyword, value) in s)
        {
            switch (keyword)
            {
                case var a when Annotations.Contains(a): break;
                case "$ref":
                    string name = value!.GetValue<string>().Replace("#/$defs/", "", StringComparison.Ordinal);
                    Check(root, root["$defs"]![name]!.AsObject(), node, path, errors);
                    break;
                case "type":
                    if (TypeOf(node) is var t && !(t == value!.GetValue<string>() || (t == "integer" && value.GetValue<string>() == "number")))
                        errors.Add($"{path}: expected {value}, found {t}");
                    break;
                case "enum":
                    if (node is not YamlScalarNode e || !value!.AsArray().Any(v => v!.GetValue<string>() == e.Value)) errors.Add($"{path}: not one of {value!.ToJsonString()}");
                    break;
                case "pattern":
                    if (node is YamlScalarNode p && TypeOf(node) == "string" && !Regex.IsMatch(p.Value ?? "", value!.GetValue<string>()))
                        errors.Add($"{path}: '{p.Value}' does not match {value}");
                    break;
                case "minimum" or "maximum" or "multipleOf":
                    if (Number(node) is { } x)
                    {
                        double limit = Value(value!);
                        bool ok = keyword switch { "minimum" => x >= limit, "maximum" => x <= limit, _ => Math.IEEERemainder(x, limit) == 0 };
                        if (!ok) errors.Add($"{path}: {x.ToString(CultureInfo.InvariantCulture)} fails {keyword} {limit.ToString(CultureInfo.InvariantCulture)}");
                    }
                    break;
                case "properties" or "additionalProperties" or "required" or "propertyNames" or "maxProperties":
                    if (node is YamlMappingNode map) Mapping(root, s, keyword, map, path, errors);
                    break;
                case "items" or "minItems" or "maxItems":
                    if (node is YamlSequenceNode seq)
                    {
                        if (keyword == "items")
                            for (int i = 0; i < seq.Children.Count; i++) Check(root, value!.AsObject(), seq.Children[i], $"{path}[{i}]", errors);
                        else if (keyword == "minItems" ? seq.Children.Count < Value(value!) : seq.Children.Count > Value(value!))
                            errors.Add($"{path}: {seq.Children.Count} items fails {keyword} {value}");
                    }
                    break;
                case "anyOf":
                    var attempts = value!.AsArray().Select(o => { var e2 = new List<string>(); Check(root, o!.AsObject(), node, path, e2); return e2; }).ToArray();
                    if (attempts.All(a => a.Count > 0)) errors.Add($"{path}: matches none of anyOf ({string.Join("; ", attempts.SelectMany(a => a).Take(3))})");
                    break;
                default: throw new NotSupportedException($"schema keyword '{keyword}' is outside the validated subset");
            }
        }
    }

    private static void Mapping(JsonObject root, JsonObject s, string keyword, YamlMappingNode map, string path, List<string> errors)
    {
        var keys = new List<(string, YamlNode)>();
        foreach (var (k, v) in map.Children)
        {
            if (k is YamlScalarNode { Value: { } name }) keys.Add((name, v));
            else errors.Add($"{path}: a key is not a plain name");
        }
        var properties = s["properties"]?.AsObject();
        switch (keyword)
        {
            case "properties":
                foreach (var (k, v) in keys)
                    if (properties!.TryGetPropertyValue(k, out var sub)) Check(root, sub!.AsObject(), v, Join(path, k), errors);
                break;
            case "additionalProperties":
                foreach (var (k, v) in keys.Where(p => properties is null || !properties.ContainsKey(p.Item1)))
                {
                    if (s["additionalProperties"] is JsonObject extra) Check(root, extra, v, Join(path, k), errors);
                    else errors.Add($"{Join(path, k)}: key not allowed");
                }
                break;
            case "required":
                foreach (var r in s["required"]!.AsArray().Select(r => r!.GetValue<string>()))
                    if (!keys.Any(p => p.Item1 == r)) errors.Add($"{path}: missing {r}");
                break;
            case "propertyNames":
                foreach (var (k, _) in keys)
                    Check(root, new JsonObject { ["pattern"] = s["propertyNames"]!["pattern"]!.GetValue<string>() }, new YamlScalarNode(k) { Style = ScalarStyle.DoubleQuoted }, Join(path, k), errors);
                break;
            case "maxProperties":
                if (keys.Count > Value(s["maxProperties"]!)) errors.Add($"{path}: {keys.Count} entries fails maxProperties");
                break;
        }
    }

    private static double Value(JsonNode n) => double.Parse(n.ToJsonString(), CultureInfo.InvariantCulture);

    private static string Join(string path, string key) => path.Length == 0 ? key : path + "." + key;

    // The YAML 1.2 core schema's resolution of plain scalars (§10.3.2); quoted scalars are strings.
    private static string TypeOf(YamlNode node) => node switch
    {
        YamlMappingNode => "object",
        YamlSequenceNode => "array",
        YamlScalarNode { Style: ScalarStyle.Plain } p when p.Value is "true" or "false" or "True" or "False" or "TRUE" or "FALSE" => "boolean",
        YamlScalarNode { Style: ScalarStyle.Plain } p when p.Value is null or "" or "~" or "null" or "Null" or "NULL" => "null",
        YamlScalarNode { Style: ScalarStyle.Plain } p when Regex.IsMatch(p.Value!, "^[-+]?[0-9]+$") => "integer",
        YamlScalarNode { Style: ScalarStyle.Plain } p when Regex.IsMatch(p.Value!, @"^[-+]?(\.[0-9]+|[0-9]+(\.[0-9]*)?)([eE][-+]?[0-9]+)?$") => "number",
        _ => "string",
    };

    private static double? Number(YamlNode node) =>
        TypeOf(node) is "number" or "integer" ? double.Parse(((YamlScalarNode)node).Value!, NumberStyles.Float, CultureInfo.InvariantCulture) : null;
}

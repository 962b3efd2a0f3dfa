using System.Text.Json;
using System.Text.Json.Nodes;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>JSON files the tool wrote earlier and reads back as input (a calibration, fitted values): refused by name when missing or malformed.</summary>
public static class JsonInput
{
    /// <summary>The parsed file.</summary>
    /// <param name="path">The file.</param>
    /// <param name="what">What it is, for messages ("calibration", "fitted values").</param>
    /// <exception cref="InputException">The file is missing or not JSON.</exception>
    public static JsonNode? Read(string path, string what)
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

    /// <summary>A finite number, or null for anything else (missing, null, text, ±∞).</summary>
    public static double? Number(JsonNode? node)
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

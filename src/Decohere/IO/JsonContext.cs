using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Serialization;
using Decohere.Analyses.Sweeps;

namespace Decohere.IO;

/// <summary>
/// Serialisation code for the typed JSON the tool reads and writes, generated at compile time (System.Text.Json source
/// generation): the native executable has no reflection-based serialiser. The JSON files themselves (summaries,
/// manifests, fit and lifetime results) are built as JSON nodes, which need no type metadata.
/// </summary>
[JsonSourceGenerationOptions(WriteIndented = false)]
[JsonSerializable(typeof(SweepDescription))]
public sealed partial class DecohereJsonContext : JsonSerializerContext;

/// <summary>The options of every JSON file written for people to read (summaries, manifests, the scenario schema).</summary>
public static class JsonFiles
{
    /// <summary>Indented; µ, σ, ½ and the like kept as written rather than escaped.</summary>
    public static JsonSerializerOptions Options { get; } = new() { WriteIndented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };
}

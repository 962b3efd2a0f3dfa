using System.Reflection;

namespace Decohere.Core;

/// <summary>What every result file carries about its origin: scenario text and hash, seed, tool version, conventions.</summary>
public sealed record Provenance(string ScenarioName, string ScenarioHash, string ScenarioText, long Seed, string ToolVersion)
{
    /// <summary>The conventions every table of the project follows, stored in each file.</summary>
    public const string Conventions =
        "quadratures x=(a+a†)/√2, p=(a−a†)/(i√2), [x,p]=i; covariance V=½⟨{ΔR,ΔR}⟩, zero-point variance 0.5; " +
        "squeezing_db=10·log10(0.5/var_min), positive below zero-point; angle_rad: minimum-variance quadrature from x towards p, in (−π/2, π/2]; " +
        "occupancy=(var_x+var_p)/2−½+(⟨x⟩²+⟨p⟩²)/2; frame rotating at each mode's frequency (rotating-wave approximation); " +
        "times in s, frequencies in Hz (ordinary, not angular); added noise in quanta per quadrature, input-referred";

    /// <summary>The tool's version (assembly informational version).</summary>
    public static string Version { get; } =
        typeof(Provenance).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion.Split('+')[0] ?? "0.0.0";

    /// <summary>Provenance of a result that has no scenario (a calibration from data alone).</summary>
    public static Provenance Standalone(string name, long seed = 0) => new(name, "", "", seed, Version);

    /// <summary>Reads back the pairs <see cref="ToKeyValues"/> wrote (missing keys read as empty).</summary>
    public static Provenance FromKeyValues(IReadOnlyDictionary<string, string> kv) => new(
        kv.GetValueOrDefault("decohere.scenario_name", ""), kv.GetValueOrDefault("decohere.scenario_sha256", ""),
        kv.GetValueOrDefault("decohere.scenario", ""),
        long.TryParse(kv.GetValueOrDefault("decohere.seed"), System.Globalization.NumberStyles.Integer, System.Globalization.CultureInfo.InvariantCulture, out long seed) ? seed : 0,
        kv.GetValueOrDefault("decohere.version", ""));

    /// <summary>Key-value pairs for a Parquet footer.</summary>
    public IReadOnlyDictionary<string, string> ToKeyValues() => new Dictionary<string, string>
    {
        ["decohere.version"] = ToolVersion,
        ["decohere.scenario_name"] = ScenarioName,
        ["decohere.scenario_sha256"] = ScenarioHash,
        ["decohere.scenario"] = ScenarioText,
        ["decohere.seed"] = Seed.ToString(System.Globalization.CultureInfo.InvariantCulture),
        ["decohere.conventions"] = Conventions,
    };
}

using System.Globalization;
using System.Reflection;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace Decohere.IO;

/// <summary>The files one command writes into its output directory, under a key that names the command (and shard).</summary>
/// <param name="Key">The command's entry in the manifest ("run", "sweep part 3/8").</param>
/// <param name="Files">Every file name the command may write; only these are ever removed.</param>
public sealed record OutputSet(string Key, IReadOnlyList<string> Files)
{
    /// <summary><c>run</c>: covariances, shots, estimates, trajectories, summary and plots.</summary>
    public static OutputSet Run { get; } = new("run",
        ["covariance.parquet", "summary.json", "variance.png", "variance.svg", "shots.parquet", "estimates.parquet", "estimates.png",
         "estimates.svg", "iq.png", "iq.svg", "trajectories.parquet", "covariance.csv", "shots.csv", "estimates.csv", "trajectories.csv"]);

    /// <summary><c>lifetime</c>.</summary>
    public static OutputSet Lifetime { get; } = new("lifetime", ["lifetime.json", "lifetime.parquet", "lifetime.png", "lifetime.svg", "lifetime.csv"]);

    /// <summary><c>tolerance</c>.</summary>
    public static OutputSet Tolerance { get; } = new("tolerance", ["tolerance.json", "tolerance.parquet", "tolerance.png", "tolerance.svg", "tolerance.csv"]);

    /// <summary><c>fit</c>.</summary>
    public static OutputSet Fit { get; } = new("fit", ["fit.json", "fit.parquet", "fit.png", "fit.svg", "fit.md", "fit.tex", "fit.csv"]);

    /// <summary><c>joint-fit</c>.</summary>
    public static OutputSet JointFit { get; } = new("joint-fit", ["joint-fit.json", "joint-fit.parquet", "joint-fit.png", "joint-fit.svg", "joint-fit.md", "joint-fit.csv"]);

    /// <summary><c>fit-noise</c>.</summary>
    public static OutputSet FitNoise { get; } = new("fit-noise", ["fit-noise.json", "fit-noise.png", "fit-noise.svg"]);

    /// <summary><c>spectrum</c>.</summary>
    public static OutputSet Spectrum { get; } = new("spectrum", ["spectrum.json", "spectrum.parquet", "spectrum.png", "spectrum.svg", "spectrum.csv"]);

    /// <summary><c>cooling</c>.</summary>
    public static OutputSet Cooling { get; } = new("cooling", ["cooling.json", "cooling.parquet", "cooling.png", "cooling.svg", "cooling.csv"]);

    /// <summary><c>ringdown</c>.</summary>
    public static OutputSet Ringdown { get; } = new("ringdown", ["ringdown.json", "ringdown.parquet", "ringdown.png", "ringdown.svg", "ringdown.csv"]);

    /// <summary><c>modes</c>: collective modes of a lattice (with <c>--spectroscopy</c> also the simulated drum spectroscopy).</summary>
    public static OutputSet Modes { get; } = new("modes", ["modes.parquet", "modes.json", "modes.png", "modes.svg", "modes.csv", "spectroscopy.parquet", "spectroscopy.png", "spectroscopy.svg", "spectroscopy.csv"]);

    /// <summary><c>reconstruct</c>.</summary>
    public static OutputSet Reconstruct { get; } = new("reconstruct", ["reconstruct.json", "reconstruct.parquet", "reconstruct.csv"]);

    /// <summary>An unsharded <c>sweep</c>, or <c>merge</c> (which writes the same two files from the parts).</summary>
    public static OutputSet Sweep { get; } = new("sweep", ["sweep.parquet", "sweep.png", "sweep.svg", "sweep.csv"]);

    /// <summary>One shard of a sweep: only its own part file, never the other shards' (they may be running now).</summary>
    public static OutputSet SweepPart(string partFile) => new($"sweep {partFile}", [partFile, Path.ChangeExtension(partFile, ".csv")]);
}

/// <summary>
/// An output directory owned by a command. Claiming it creates it and removes what an earlier run of the same command
/// left there: its outputs (by their known names only, so a user's other files are never touched) and the temporary
/// files of interrupted writes of those names. Without this, a run that writes fewer files than the last one (a
/// readout removed, no trajectories this time) would leave old tables beside a new summary that does not describe
/// them. After writing, <see cref="Record"/> lists the files in <see cref="ManifestName"/>, one entry per command, so
/// commands that share a directory (run, lifetime, fit on one scenario) keep each other's entries.
/// </summary>
public sealed class OutputDirectory
{
    /// <summary>The manifest file: per command, the files its last run wrote, their sizes and when.</summary>
    public const string ManifestName = "decohere-manifest.json";

    /// <summary>Full path of the directory.</summary>
    public string Path { get; }

    /// <summary>The files the owning command writes.</summary>
    public OutputSet Set { get; }

    private OutputDirectory(string path, OutputSet set)
    {
        Path = path;
        Set = set;
    }

    /// <summary>Creates <paramref name="directory"/> if needed and removes the stale outputs and temporary files of <paramref name="set"/> in it.</summary>
    /// <param name="directory">The output directory.</param>
    /// <param name="set">The files the command writes.</param>
    /// <param name="keep">Outputs of the set that this run reads back (a sweep resumed from its finished table); only their temporary files go.</param>
    /// <exception cref="IOException">The directory cannot be created (a file has its name) or a stale file cannot be removed.</exception>
    public static OutputDirectory Claim(string directory, OutputSet set, params string[] keep)
    {
        string full = System.IO.Path.GetFullPath(directory);
        Directory.CreateDirectory(full);
        foreach (string name in set.Files)
        {
            string stale = System.IO.Path.Combine(full, name);
            if (File.Exists(stale) && !keep.Contains(name)) File.Delete(stale);
            // AtomicFile's temporary names: "<name>.partial-<pid>-<guid>"; a killed process leaves them behind.
            foreach (string partial in Directory.EnumerateFiles(full, name + ".partial-*")) File.Delete(partial);
        }
        var owned = new OutputDirectory(full, set);
        owned.UpdateManifest(entry: null);
        return owned;
    }

    /// <summary>Records the files written (paths inside the directory; others are ignored) in the manifest.</summary>
    public void Record(IEnumerable<string> paths)
    {
        var files = new JsonArray();
        foreach (string path in paths)
        {
            var file = new FileInfo(System.IO.Path.GetFullPath(path));
            if (!file.Exists || !string.Equals(file.DirectoryName, Path, StringComparison.Ordinal)) continue;
            files.Add((JsonNode)new JsonObject { ["name"] = file.Name, ["bytes"] = file.Length });
        }
        UpdateManifest(new JsonObject
        {
            ["written_utc"] = DateTime.UtcNow.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture),
            ["tool_version"] = typeof(OutputDirectory).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "unknown",
            ["files"] = files,
        });
    }

    /// <summary>The files each command recorded in the manifest of <paramref name="directory"/> (empty when there is none or it is unreadable).</summary>
    public static IReadOnlyDictionary<string, IReadOnlyList<string>> ReadManifest(string directory)
    {
        var result = new Dictionary<string, IReadOnlyList<string>>();
        if (Load(System.IO.Path.Combine(directory, ManifestName))["commands"] is JsonObject commands)
            foreach (var (key, value) in commands)
                result[key] = value?["files"] is JsonArray files ? [.. files.Select(f => (string?)f?["name"] ?? "")] : [];
        return result;
    }

    // Read, change one command's entry, write back atomically. Shards of one sweep writing into a shared directory at
    // the same moment may lose each other's entry; the manifest is a record, nothing reads it to decide what to delete.
    private void UpdateManifest(JsonObject? entry)
    {
        string path = System.IO.Path.Combine(Path, ManifestName);
        var root = Load(path);
        if (root["commands"] is not JsonObject commands) root["commands"] = commands = [];
        commands.Remove(Set.Key);
        if (entry is not null) commands[Set.Key] = entry;
        AtomicFile.WriteAllText(path, root.ToJsonString(JsonFiles.Options) + Environment.NewLine);
    }

    // A manifest that is missing, unreadable or not ours is replaced rather than refused: it only records.
    private static JsonObject Load(string path)
    {
        try
        {
            if (File.Exists(path) && JsonNode.Parse(File.ReadAllText(path)) is JsonObject root && (string?)root["format"] == Format)
                return root;
        }
        catch (Exception e) when (e is JsonException or IOException or InvalidOperationException)
        {
        }
        return new JsonObject { ["format"] = Format };
    }

    private const string Format = "decohere-manifest/1";

    /// <summary>
    /// Why <paramref name="name"/> cannot be a scenario name, or null when it can. The name becomes the folder
    /// results/&lt;name&gt;, so it must be one plain path segment on every platform: no separators, no "." or "..", no
    /// drive letters, control or wildcard characters, and no trailing dot or space (which Windows drops).
    /// </summary>
    public static string? NameProblem(string name)
    {
        const int maxLength = 100;
        string rule = $"a scenario name names the folder results/<name>: use letters, digits, spaces and - _ . + ( ), start with a letter or digit, at most {maxLength} characters (choose any other folder with --out)";
        if (name.Length > maxLength) return $"the name is {name.Length} characters long; {rule}";
        if (!char.IsLetterOrDigit(name[0])) return $"'{Printable(name)}' is not a plain name; {rule}";
        foreach (char c in name)
            if (!(char.IsLetterOrDigit(c) || c is ' ' or '-' or '_' or '.' or '+' or '(' or ')'))
                return $"'{Printable(name)}' is not a plain name (character {Describe(c)}); {rule}";
        if (name[^1] is '.' or ' ') return $"'{Printable(name)}' ends in '{name[^1]}'; {rule}";
        string stem = name.Split('.')[0].TrimEnd().ToUpperInvariant();
        if (stem is "CON" or "PRN" or "AUX" or "NUL" || (stem.Length == 4 && (stem.StartsWith("COM") || stem.StartsWith("LPT")) && char.IsAsciiDigit(stem[3])))
            return $"'{name}' is a device name on Windows; {rule}";
        return null;
    }

    private static string Describe(char c) => char.IsControl(c) || char.IsWhiteSpace(c) ? $"U+{(int)c:X4}" : $"'{c}'";

    private static string Printable(string s) => string.Concat(s.Select(c => char.IsControl(c) ? $"\\u{(int)c:X4}" : c.ToString()));
}

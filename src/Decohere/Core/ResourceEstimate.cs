using System.Collections.Immutable;
using System.Globalization;

namespace Decohere.Core;

/// <summary>
/// The bounds a command is held to before it starts: peak memory and bytes written to disk. The defaults stop a typo (a
/// 42 s stage where 42 ms was meant, a 0.2 ns output step) before it fills the memory or the disk, and leave every
/// scenario a lab runs far inside: the demo needs about 200 MB and 1 MB, 10⁸ shots 4 GB of disk.
/// </summary>
/// <param name="MemoryBytes">Most estimated peak memory (bytes); null: no bound.</param>
/// <param name="DiskBytes">Most estimated bytes written (bytes); null: no bound.</param>
public sealed record ResourceLimits(long? MemoryBytes, long? DiskBytes)
{
    /// <summary>
    /// 4 GiB of memory: a quarter to a half of a laptop's, so a run never pushes the machine into swap; 20 GiB of disk:
    /// five times the 10⁸-shot example, and less than the free space of an ordinary disk.
    /// </summary>
    public static ResourceLimits Default { get; } = new(4L << 30, 20L << 30);

    /// <summary>No bound (the estimate is still made).</summary>
    public static ResourceLimits None { get; } = new(null, null);

    /// <summary>Parses a size such as <c>8GiB</c>, <c>500 MB</c>, <c>2e9</c> (bytes); binary (KiB, MiB, GiB, TiB) and decimal (kB, MB, GB, TB) units.</summary>
    /// <exception cref="InputException">Not a positive size; the message names <paramref name="setting"/>.</exception>
    public static long ParseSize(string text, string setting)
    {
        string t = text.Trim();
        int split = t.Length;
        while (split > 0 && char.IsLetter(t[split - 1])) split--;
        string unit = t[split..], number = t[..split].Trim();
        long scale = unit.ToLowerInvariant() switch
        {
            "" or "b" => 1,
            "kb" => 1000, "mb" => 1000_000, "gb" => 1000_000_000, "tb" => 1000_000_000_000,
            "kib" or "k" => 1L << 10, "mib" or "m" => 1L << 20, "gib" or "g" => 1L << 30, "tib" or "t" => 1L << 40,
            _ => 0,
        };
        if (scale == 0) throw new InputException($"{setting}: unknown unit '{unit}' in '{text}'; use B, KiB, MiB, GiB, TiB (or kB, MB, GB, TB), e.g. 8GiB");
        if (!double.TryParse(number, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) || !(v > 0) || v * scale > long.MaxValue / 2.0)
            throw new InputException($"{setting}: '{text}' is not a positive size, e.g. 8GiB");
        return (long)Math.Ceiling(v * scale);
    }

    /// <summary>A count for messages: <c>2201</c>, <c>8.4e6</c>.</summary>
    public static string Count(double n) => n < 1e6 ? n.ToString("0", CultureInfo.InvariantCulture) : n.ToString("0.##e0", CultureInfo.InvariantCulture);

    /// <summary>A byte count for messages: <c>5.1 GiB</c>.</summary>
    public static string Format(double bytes) => bytes switch
    {
        >= 1L << 40 => $"{bytes / (1L << 40):G3} TiB",
        >= 1L << 30 => $"{bytes / (1L << 30):G3} GiB",
        >= 1L << 20 => $"{bytes / (1L << 20):G3} MiB",
        >= 1L << 10 => $"{bytes / (1L << 10):G3} KiB",
        _ => $"{bytes:G3} B",
    };
}

/// <summary>One part of a command's work: what it is, its rows, and the memory and disk it takes.</summary>
/// <param name="What">In the user's words: "covariance table (2200 times × 2 modes)".</param>
/// <param name="Rows">Rows written or held.</param>
/// <param name="MemoryBytes">Memory held at the part's peak (bytes).</param>
/// <param name="DiskBytes">Bytes written (bytes).</param>
public sealed record ResourcePart(string What, double Rows, double MemoryBytes, double DiskBytes);

/// <summary>
/// What a command will need, estimated from its inputs before any work starts (the estimators are in
/// <c>Analyses.ResourceEstimates</c> and, for data files, <c>IO.FitDataReader</c>): rows, peak memory and disk, part
/// by part. Peak memory is the base of the process plus the largest parts that are held at once; coefficients per row
/// were measured on the demo scenario (peak working set against rows) and rounded up.
/// </summary>
/// <param name="Command">The command estimated (for messages).</param>
/// <param name="Parts">The parts.</param>
public sealed record ResourceEstimate(string Command, ImmutableArray<ResourcePart> Parts)
{
    /// <summary>Memory of the process before any part: runtime, engine, libraries (measured: about 150 MB).</summary>
    public const double BaseMemoryBytes = 200e6;

    /// <summary>Estimated peak memory: the base plus every part (parts are held together or one after another; the sum bounds both).</summary>
    public double MemoryBytes => BaseMemoryBytes + Parts.Sum(p => p.MemoryBytes);

    /// <summary>Estimated bytes written.</summary>
    public double DiskBytes => Parts.Sum(p => p.DiskBytes);

    /// <summary>Refuses an estimate beyond <paramref name="limits"/>, naming the estimate, its largest part and the setting to change.</summary>
    /// <exception cref="InputException">The memory or disk estimate exceeds its limit; the message starts with "memory limit" or "disk limit".</exception>
    public void Enforce(ResourceLimits limits)
    {
        ArgumentNullException.ThrowIfNull(limits);
        if (limits.MemoryBytes is { } memory && MemoryBytes > memory)
            throw new InputException($"memory limit: {Command} needs an estimated {ResourceLimits.Format(MemoryBytes)} of memory, more than the limit of " +
                $"{ResourceLimits.Format(memory)}; {Largest(p => p.MemoryBytes)}. Raise the memory limit if the machine has the memory, or skip the bound");
        if (limits.DiskBytes is { } disk && DiskBytes > disk)
            throw new InputException($"disk limit: {Command} would write an estimated {ResourceLimits.Format(DiskBytes)}, more than the limit of " +
                $"{ResourceLimits.Format(disk)}; {Largest(p => p.DiskBytes)}. Raise the disk limit if the disk has the space, or skip the bound");
    }

    private string Largest(Func<ResourcePart, double> size)
    {
        var part = Parts.MaxBy(size)!;
        return $"most of it is the {part.What}, {ResourceLimits.Format(size(part))} (a longer output step, fewer shots, trajectories or points make it smaller)";
    }
}

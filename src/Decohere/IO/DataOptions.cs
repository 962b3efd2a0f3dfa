using System.Collections.Immutable;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>
/// How to read a data file: which file column holds each expected column (<c>delay_s=t_ms</c>), the unit of the delay
/// column, and for shot data the value of the <c>mode</c> column to keep.
/// </summary>
public sealed record DataOptions
{
    /// <summary>Expected column name → the file's column name.</summary>
    public ImmutableDictionary<string, string> Columns { get; init; } = ImmutableDictionary<string, string>.Empty;

    /// <summary>Seconds per unit of the delay column (1e-3 for a column in ms).</summary>
    public double DelayScale { get; init; } = 1;

    /// <summary>The mode whose shots to keep when the file has a <c>mode</c> column; null keeps the readout mode.</summary>
    public string? Mode { get; init; }

    /// <summary>Memory bound of reading the file (its rows × the columns used), checked before the columns are read.</summary>
    public ResourceLimits Limits { get; init; } = ResourceLimits.Default;

    /// <summary>Every column name a data file can have, for messages and validation of <see cref="Columns"/>.</summary>
    public static readonly ImmutableArray<string> KnownColumns =
        ["delay_s", "i", "q", "mode", "var_i", "var_q", "cov_iq", "shots", "occupancy", "occupancy_err"];

    /// <summary>
    /// Parses <c>NAME=FILE_COLUMN</c> mappings and a delay unit (<c>s</c>, <c>ms</c>, <c>us</c>, <c>ns</c>).
    /// </summary>
    /// <exception cref="InputException">A mapping is malformed, names an unknown column, or the unit is unknown.</exception>
    public static DataOptions Parse(IEnumerable<string> mappings, string? delayUnit, string? mode = null)
    {
        var map = ImmutableDictionary.CreateBuilder<string, string>();
        foreach (string m in mappings)
        {
            int eq = m.IndexOf('=');
            if (eq <= 0 || eq == m.Length - 1)
                throw new InputException($"column mapping '{m}': expected NAME=FILE_COLUMN, e.g. delay_s=t_ms; NAME is one of {string.Join(", ", KnownColumns)}");
            string name = m[..eq].Trim(), column = m[(eq + 1)..].Trim();
            if (!KnownColumns.Contains(name))
                throw new InputException($"column mapping '{m}': unknown column '{name}'; allowed: {string.Join(", ", KnownColumns)}");
            if (map.ContainsKey(name)) throw new InputException($"column mapping: '{name}' is mapped twice");
            map[name] = column;
        }
        double scale = 1;
        if (delayUnit is not null)
        {
            if (!Quantity.TryParse("1 " + delayUnit.Trim(), Dimension.Time, out scale, out _))
                throw new InputException($"delay unit '{delayUnit}': unknown time unit; allowed: {string.Join(", ", Quantity.UnitsOf(Dimension.Time))}");
        }
        return new DataOptions { Columns = map.ToImmutable(), DelayScale = scale, Mode = mode };
    }
}

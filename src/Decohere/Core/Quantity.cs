using System.Globalization;
using System.Text.RegularExpressions;

namespace Decohere.Core;

/// <summary>Physical dimension of a scenario quantity; decides which unit suffixes are accepted.</summary>
public enum Dimension
{
    /// <summary>Ordinary frequency in Hz (not angular).</summary>
    Frequency,
    /// <summary>Time in seconds.</summary>
    Time,
    /// <summary>Temperature in kelvin.</summary>
    Temperature,
    /// <summary>Decibels (a power ratio).</summary>
    Decibel,
    /// <summary>Plane angle in radians.</summary>
    Angle,
    /// <summary>A pure number (quanta, ratios, counts).</summary>
    Dimensionless,
}

/// <summary>
/// Parses "number unit" strings ("4.1 MHz", "15 mK", "10 us") or bare numbers into SI values.
/// A bare number is taken in the SI unit of its dimension (Hz, s, K, dB, rad).
/// </summary>
public static partial class Quantity
{
    private static readonly Dictionary<Dimension, (string Unit, double Factor)[]> Units = new()
    {
        [Dimension.Frequency] = [("Hz", 1), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9)],
        [Dimension.Time] = [("s", 1), ("ms", 1e-3), ("us", 1e-6), ("µs", 1e-6), ("μs", 1e-6), ("ns", 1e-9)],
        [Dimension.Temperature] = [("K", 1), ("mK", 1e-3), ("uK", 1e-6), ("µK", 1e-6), ("μK", 1e-6)],
        [Dimension.Decibel] = [("dB", 1)],
        [Dimension.Angle] = [("rad", 1), ("deg", Math.PI / 180)],
        [Dimension.Dimensionless] = [],
    };

    /// <summary>The unit suffixes accepted for a dimension, for error messages.</summary>
    public static IReadOnlyList<string> UnitsOf(Dimension dimension) =>
        Units[dimension].Select(u => u.Unit).Where(u => !u.Contains('µ') && !u.Contains('μ')).ToArray();

    /// <summary>SI unit name of a dimension ("Hz", "s", ...), empty for dimensionless.</summary>
    public static string SiUnit(Dimension dimension) => dimension switch
    {
        Dimension.Frequency => "Hz",
        Dimension.Time => "s",
        Dimension.Temperature => "K",
        Dimension.Decibel => "dB",
        Dimension.Angle => "rad",
        _ => "",
    };

    // ASCII digits only: \d would admit Arabic-Indic and other digits that double.Parse then rejects. Every part of the
    // pattern is unambiguous (the integer digits cannot be split between two groups), so a match or a failure takes time
    // linear in the length; the old form \d+\.?\d* tried every split of a long digit run and was quadratic.
    [GeneratedRegex(@"^\s*([-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)\s*([^\s0-9.+-]\S*)?\s*$", RegexOptions.CultureInvariant)]
    private static partial Regex QuantityPattern();

    /// <summary>The longest text read as a quantity: 17 significant digits, sign, point, exponent and a unit fit easily.</summary>
    public const int MaxLength = 64;

    /// <summary>
    /// Parses <paramref name="text"/> as a quantity of <paramref name="dimension"/>, returning the SI value,
    /// or an error message that names the accepted units.
    /// </summary>
    public static bool TryParse(string text, Dimension dimension, out double value, out string? error)
    {
        value = double.NaN;
        error = null;
        if (text.Length > MaxLength)
        {
            error = $"'{text[..20]}...' ({text.Length} characters) is too long for a number (at most {MaxLength} characters){Expected(dimension)}";
            return false;
        }
        var match = QuantityPattern().Match(text);
        if (!match.Success)
        {
            error = text.Trim().ToLowerInvariant() is "nan" or "inf" or "+inf" or "-inf" or ".nan" or ".inf" or "-.inf" or "infinity"
                ? $"'{text}' is not a finite number"
                : $"'{text}' is not a number{Expected(dimension)}";
            return false;
        }
        double number = double.Parse(match.Groups[1].Value, NumberStyles.Float, CultureInfo.InvariantCulture);
        if (!double.IsFinite(number))
        {
            error = $"'{text}' is not a finite number";
            return false;
        }
        string unit = match.Groups[2].Success ? match.Groups[2].Value : "";
        if (unit.Length == 0)
        {
            value = number;
            return true;
        }
        foreach (var (name, factor) in Units[dimension])
        {
            if (name == unit)
            {
                // A power-of-ten unit shifts the decimal exponent, so "0.7 ms" is the double nearest 0.0007 (as the user
                // wrote it), not 0.7 × 0.001 rounded twice.
                value = Shifted(match.Groups[1].Value, factor) ?? number * factor;
                if (double.IsFinite(value)) return true;
                error = FormattableString.Invariant($"'{text}' is not a finite number in {SiUnit(dimension)} ({number:G3} × {factor:G3} overflows)");
                return false;
            }
        }
        var owner = Units.FirstOrDefault(kv => kv.Value.Any(u => u.Unit == unit)).Key;
        bool known = Units.Any(kv => kv.Value.Any(u => u.Unit == unit));
        error = known
            ? $"'{text}' is a {owner.ToString().ToLowerInvariant()}, expected a {dimension.ToString().ToLowerInvariant()}{Expected(dimension)}"
            : $"unknown unit '{unit}'{Expected(dimension)}";
        return false;
    }

    // The decimal text times a power-of-ten factor, rounded once; null when the factor is not a power of ten (degrees).
    private static double? Shifted(string text, double factor)
    {
        double shift = Math.Round(Math.Log10(factor));
        if (Math.Pow(10, shift) != factor) return null;
        int e = text.IndexOfAny(['e', 'E']);
        long exponent = 0;
        if (e >= 0 && !long.TryParse(text.AsSpan(e + 1), NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out exponent)) return null;
        string mantissa = e >= 0 ? text[..e] : text;
        return double.Parse(FormattableString.Invariant($"{mantissa}e{exponent + (long)shift}"), NumberStyles.Float, CultureInfo.InvariantCulture);
    }

    private static string Expected(Dimension dimension) => dimension == Dimension.Dimensionless
        ? " (a plain number)"
        : $" (units: {string.Join(", ", UnitsOf(dimension))}, or a bare number in {SiUnit(dimension)})";

    /// <summary>Formats an SI value with an engineering prefix for terminal output ("4.1 MHz").</summary>
    public static string Format(double value, Dimension dimension, int digits = 4)
    {
        if (!double.IsFinite(value)) return value.ToString(CultureInfo.InvariantCulture);
        // Zero has no natural prefix: it is shown in the SI unit ("0 s", never "0 ns").
        if (value == 0) return $"0 {SiUnit(dimension)}".TrimEnd();
        (string, double)[] scales = dimension switch
        {
            Dimension.Frequency => [("GHz", 1e9), ("MHz", 1e6), ("kHz", 1e3), ("Hz", 1), ("mHz", 1e-3)],
            Dimension.Time => [("s", 1), ("ms", 1e-3), ("us", 1e-6), ("ns", 1e-9)],
            Dimension.Temperature => [("K", 1), ("mK", 1e-3), ("uK", 1e-6), ("nK", 1e-9)],
            _ => [(SiUnit(dimension), 1)],
        };
        double magnitude = Math.Abs(value);
        foreach (var (unit, factor) in scales)
        {
            if (magnitude >= factor || factor == scales[^1].Item2)
                return $"{(value / factor).ToString("G" + digits, CultureInfo.InvariantCulture)} {unit}".TrimEnd();
        }
        return value.ToString("G" + digits, CultureInfo.InvariantCulture);
    }
}

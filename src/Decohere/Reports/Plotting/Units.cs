using System.Globalization;
using Decohere.Core;

namespace Decohere.Reports.Plotting;

/// <summary>A unit to show SI values in: its symbol and the size of one unit in SI ("ms", 1e-3).</summary>
/// <param name="Symbol">What follows the number ("ms", "kHz", "quanta"; empty for a pure number).</param>
/// <param name="Factor">One unit in SI units.</param>
public sealed record DisplayUnit(string Symbol, double Factor)
{
    /// <summary>The value in this unit.</summary>
    public double From(double si) => si / Factor;

    /// <summary>"1.5 ms": the value in this unit with <paramref name="digits"/> significant digits (an exact zero is "0").</summary>
    public string Format(double si, int digits = 4)
    {
        if (!double.IsFinite(si)) return "–";
        string number = From(si).ToString("G" + digits, CultureInfo.InvariantCulture).Replace("E", "e", StringComparison.Ordinal);
        return Symbol.Length == 0 ? number : $"{number} {Symbol}";
    }
}

/// <summary>
/// Picks the unit a set of values is shown in, so that the largest magnitude reads between 1 and 1000 ("0.5 ms, 1 ms",
/// "bath temperature (mK)"). A set is shown in one unit; zero never decides it (a zero alone is shown in the SI unit).
/// </summary>
public static class DisplayUnits
{
    // Largest first; ASCII-free symbols are fine here: these are printed, never parsed.
    private static (string Symbol, double Factor)[] Scales(Dimension dimension) => dimension switch
    {
        Dimension.Time => [("s", 1), ("ms", 1e-3), ("µs", 1e-6), ("ns", 1e-9)],
        Dimension.Frequency => [("GHz", 1e9), ("MHz", 1e6), ("kHz", 1e3), ("Hz", 1), ("mHz", 1e-3)],
        Dimension.Temperature => [("K", 1), ("mK", 1e-3), ("µK", 1e-6), ("nK", 1e-9)],
        _ => [(Quantity.SiUnit(dimension), 1)],
    };

    /// <summary>The unit for a set of SI values of a dimension; <paramref name="plain"/> names a dimensionless unit ("quanta").</summary>
    public static DisplayUnit For(Dimension dimension, IEnumerable<double> values, string plain = "")
    {
        if (dimension == Dimension.Dimensionless) return new DisplayUnit(plain, 1);
        var scales = Scales(dimension);
        double largest = values.Where(v => double.IsFinite(v) && v != 0).Select(Math.Abs).DefaultIfEmpty(0).Max();
        if (largest == 0) return new DisplayUnit(Quantity.SiUnit(dimension), 1);
        foreach (var (symbol, factor) in scales)
            if (largest >= factor * (1 - 1e-12)) return new DisplayUnit(symbol, factor);
        return new DisplayUnit(scales[^1].Symbol, scales[^1].Factor);
    }

    /// <summary>Times in one unit chosen from the whole set: "0 ms, 0.5 ms, 1 ms".</summary>
    public static string[] FormatAll(IReadOnlyList<double> values, Dimension dimension, int digits = 4)
    {
        var unit = For(dimension, values);
        return [.. values.Select(v => unit.Format(v, digits))];
    }
}

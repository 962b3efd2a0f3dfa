using System.Globalization;
using ScottPlot;

namespace Decohere.Reports.Plotting;

/// <summary>
/// Tick marks and labels in the project's style: plain numbers ("0.5", "2000", "3×10⁻⁵"; never "5E+03"), and log axes
/// (data plotted as log10) with at least four labelled ticks — decades when the data span several, 1-2-5 steps within one
/// or two, every integer mantissa within less than one.
/// </summary>
public static class Ticks
{
    /// <summary>A number as a tick label: up to four significant digits, powers of ten outside 10⁻³…10⁵.</summary>
    public static string Label(double v) => Format(v, powers: false);

    // With powers, every non-zero value is written as a power of ten (one notation along a log axis).
    private static string Format(double v, bool powers)
    {
        if (v == 0 || !double.IsFinite(v)) return v == 0 ? "0" : "";
        double a = Math.Abs(v);
        if (a >= 1e-3 && a < 1e5 && !powers)
        {
            // Four significant digits, never in exponent form ("20000", not "2E+04").
            double rounded = Math.Round(v, Math.Max(0, 3 - (int)Math.Floor(Math.Log10(a))));
            return rounded.ToString("0.######", CultureInfo.InvariantCulture);
        }
        int exponent = (int)Math.Floor(Math.Log10(a));
        double mantissa = Math.Round(v / Math.Pow(10, exponent), 3);
        string power = "10" + Superscript(exponent);
        return mantissa == 1 ? power : mantissa == -1 ? "−" + power : $"{mantissa.ToString("G4", CultureInfo.InvariantCulture)}×{power}";
    }

    private static string Superscript(int n) => string.Concat(n.ToString(CultureInfo.InvariantCulture).Select(c => c switch
    {
        '-' => '⁻', '0' => '⁰', '1' => '¹', '2' => '²', '3' => '³', '4' => '⁴', '5' => '⁵', '6' => '⁶', '7' => '⁷', '8' => '⁸', _ => '⁹',
    }));

    /// <summary>Linear ticks chosen by the library, labelled by <see cref="Label"/>.</summary>
    public static void Linear(IAxis axis) =>
        axis.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = Label, TargetTickCount = 6 };

    /// <summary>The values (not their logarithms) to label on a log axis spanning [lo, hi] in log10.</summary>
    public static double[] LogValues(double lo, double hi)
    {
        double span = hi - lo;
        List<double> Values(double[] mantissas)
        {
            var list = new List<double>();
            for (int e = (int)Math.Floor(lo) - 1; e <= (int)Math.Ceiling(hi); e++)
                foreach (double m in mantissas)
                {
                    double v = m * Math.Pow(10, e), l = Math.Log10(v);
                    if (l >= lo - 1e-9 && l <= hi + 1e-9) list.Add(v);
                }
            return list;
        }
        var values = Values(span >= 3 ? [1] : span >= 1 ? [1, 2, 5] : [1, 2, 3, 4, 5, 6, 7, 8, 9]);
        if (values.Count < 4 && span >= 1 && span < 3) values = Values([1, 2, 3, 5]);
        // Many decades: label every second or third decade so labels never collide.
        if (span >= 3)
        {
            int stride = (int)Math.Ceiling(values.Count / 8.0);
            values = [.. values.Where((_, i) => i % stride == 0)];
        }
        if (values.Count < 3)
        {
            // Less than a factor of ten and few integer mantissas inside: fall back to even steps in value.
            double a = Math.Pow(10, lo), b = Math.Pow(10, hi);
            double step = NiceStep((b - a) / 4);
            values = [];
            for (double v = Math.Ceiling(a / step) * step; v <= b * (1 + 1e-12); v += step) values.Add(v);
        }
        return [.. values];
    }

    /// <summary>Ticks for a log axis whose coordinates are log10 of the values, over [lo, hi] (log10); minor ticks at integer mantissas.</summary>
    public static void Log(IAxis axis, double lo, double hi)
    {
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        var majors = LogValues(lo, hi);
        // One notation along the axis: all powers of ten as soon as one label needs it ("10², 10³, 10⁵", not "100, 1000, 10⁵").
        bool powers = majors.Any(v => Math.Abs(v) < 1e-3 || Math.Abs(v) >= 1e5);
        foreach (double v in majors) ticks.AddMajor(Math.Log10(v), Format(v, powers));
        if (hi - lo < 6)
            for (int e = (int)Math.Floor(lo); e <= (int)Math.Ceiling(hi); e++)
                for (int m = 1; m <= 9; m++)
                {
                    double l = Math.Log10(m * Math.Pow(10, e));
                    if (l >= lo && l <= hi && !majors.Any(v => Math.Abs(Math.Log10(v) - l) < 1e-9)) ticks.AddMinor(l);
                }
        axis.TickGenerator = ticks;
    }

    private static double NiceStep(double rough)
    {
        double p = Math.Pow(10, Math.Floor(Math.Log10(rough)));
        double m = rough / p;
        return (m < 1.5 ? 1 : m < 3.5 ? 2 : m < 7.5 ? 5 : 10) * p;
    }

    /// <summary>Whether values (all &gt; 0) span enough decades for a log axis: a factor of 30 or more.</summary>
    public static bool SpansDecades(IEnumerable<double> values)
    {
        var positive = values.Where(v => double.IsFinite(v)).ToArray();
        if (positive.Length < 2 || positive.Any(v => v <= 0)) return false;
        return positive.Max() / positive.Min() >= 30;
    }
}

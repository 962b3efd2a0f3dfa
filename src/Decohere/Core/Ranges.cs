using System.Collections.Immutable;
using System.Globalization;

namespace Decohere.Core;

/// <summary>A set of values parsed from the range grammar of <see cref="Ranges"/>, in the order written.</summary>
/// <param name="Values">The values (SI units).</param>
/// <param name="Logarithmic">True for <c>FROM:TO:COUNT:log</c>.</param>
public sealed record ValueRange(ImmutableArray<double> Values, bool Logarithmic);

/// <summary>
/// The one grammar for a set of values, used wherever a setting takes several (swept parameters, the tolerance's added
/// noise). Values are written as the setting writes one value (with units where it has a dimension: <c>5mK</c>,
/// <c>20 kHz</c>):
/// <list type="bullet">
/// <item><c>FROM:TO:COUNT</c> — COUNT values evenly spaced, both ends included;</item>
/// <item><c>FROM:TO:+STEP</c> — FROM, FROM + STEP, … up to TO (included when it falls on the grid);</item>
/// <item><c>FROM:TO:COUNT:log</c> — COUNT values evenly spaced in log10 (FROM, TO &gt; 0);</item>
/// <item><c>v1,v2,…</c> — a list (one value is a list of one).</item>
/// </list>
/// The third field is a count unless it starts with <c>+</c>: <c>0:3:+0.25</c> is 13 values, <c>0:3:4</c> is 0, 1, 2, 3.
/// </summary>
public static class Ranges
{
    /// <summary>The accepted forms, for messages and help.</summary>
    public const string Forms = "FROM:TO:COUNT, FROM:TO:+STEP, FROM:TO:COUNT:log or v1,v2,...";

    /// <summary>Largest number of values one range may have (a guard against typos such as 1e9 points).</summary>
    public const int MaxCount = 10_000_000;

    /// <summary>Parses <paramref name="text"/>; <paramref name="value"/> parses one value (throwing <see cref="InputException"/> with the reason).</summary>
    /// <param name="text">The range text.</param>
    /// <param name="value">Parser of one value, with units where the setting has a dimension.</param>
    /// <param name="setting">The setting's name, which starts every message.</param>
    /// <param name="forms">The forms to quote in messages (default <see cref="Forms"/>).</param>
    /// <exception cref="InputException">Malformed text, a bad value, an empty or too long range; the message names the setting and the forms.</exception>
    public static ValueRange Parse(string text, Func<string, double> value, string setting, string forms = Forms)
    {
        double Value(string part)
        {
            if (part.Trim().Length == 0) throw new InputException($"{setting}: empty value; expected {forms}");
            try
            {
                return value(part.Trim());
            }
            catch (InputException e)
            {
                throw new InputException($"{setting}: {e.Message}; expected {forms}");
            }
        }
        text = text.Trim();
        if (!text.Contains(':'))
        {
            string[] items = text.Split(',');
            if (items.Length > MaxCount) throw new InputException($"{setting}: more than {MaxCount} values");
            return new ValueRange([.. items.Select(Value)], false);
        }
        if (text.Contains(','))
            throw new InputException($"{setting}: '{text}' mixes a range (:) and a list (,); expected {forms}");
        string[] parts = text.Split(':');
        if (parts.Length is < 3 or > 4)
            throw new InputException($"{setting}: '{text}' has {parts.Length} fields; expected {forms}");
        bool log = false;
        if (parts.Length == 4)
        {
            if (!parts[3].Trim().Equals("log", StringComparison.OrdinalIgnoreCase))
                throw new InputException($"{setting}: the fourth field '{parts[3].Trim()}' must be 'log'; expected {forms}");
            log = true;
        }
        double from = Value(parts[0]), to = Value(parts[1]);
        string third = parts[2].Trim();
        if (third.StartsWith('+'))
        {
            if (log) throw new InputException($"{setting}: a log range takes a COUNT, not a STEP; expected {forms}");
            double step = Value(third[1..]);
            if (!(step > 0) || !double.IsFinite(step)) throw new InputException($"{setting}: STEP must be > 0 (got {Format(step)})");
            if (to < from) throw new InputException($"{setting}: TO ({Format(to)}) must be ≥ FROM ({Format(from)}) for a STEP");
            // The relative slack keeps TO when rounding puts it a hair beyond the last step (0:3:+0.1).
            double count = Math.Floor((to - from) / step * (1 + 1e-12) + 1e-9) + 1;
            if (count > MaxCount) throw new InputException($"{setting}: the range has {count:G3} values; at most {MaxCount}");
            return new ValueRange([.. Enumerable.Range(0, (int)count).Select(k => from + k * step)], false);
        }
        if (!int.TryParse(third, NumberStyles.None, CultureInfo.InvariantCulture, out int n) || n < 1 || n > MaxCount)
            throw new InputException($"{setting}: COUNT '{third}' must be a whole number from 1 to {MaxCount} (for a step write FROM:TO:+STEP); expected {forms}");
        if (n == 1 && from != to)
            throw new InputException($"{setting}: COUNT 1 needs FROM = TO (or give a single value)");
        if (log && (from <= 0 || to <= 0))
            throw new InputException($"{setting}: a log range needs FROM > 0 and TO > 0, got {Format(from)} and {Format(to)}");
        return new ValueRange(log ? LogSpaced(from, to, n) : LinearlySpaced(from, to, n), log);
    }

    /// <summary>Whole counts (shots) in the same grammar, e.g. <c>500,2000,1e4</c> or <c>1000:10000:+1000</c>; repeats are dropped.</summary>
    /// <exception cref="InputException">A value is not a whole number of at least <paramref name="minimum"/>; the message names the setting.</exception>
    public static ImmutableArray<long> ParseCounts(string text, string setting, long minimum = 1, string? why = null)
    {
        double Count(string part)
        {
            if (!double.TryParse(part, NumberStyles.Float, CultureInfo.InvariantCulture, out double d) || d != Math.Floor(d) || !(Math.Abs(d) < 9e18))
                throw new InputException($"'{part}' is not a whole number");
            if (d < minimum) throw new InputException($"{d:R} is too few; at least {minimum} {why ?? "are needed"}");
            return d;
        }
        return [.. Parse(text, Count, setting, "a list like 500,2000,1e4 or FROM:TO:+STEP").Values.Select(v => (long)Math.Round(v)).Distinct()];
    }

    /// <summary>n values from a to b inclusive, evenly spaced; the ends are exact.</summary>
    public static ImmutableArray<double> LinearlySpaced(double a, double b, int n)
    {
        if (n == 1) return [a];
        var v = new double[n];
        for (int i = 0; i < n; i++) v[i] = a + (b - a) * i / (n - 1);
        v[n - 1] = b;
        return [.. v];
    }

    /// <summary>n values from a to b inclusive, evenly spaced in log10 (a, b &gt; 0); the ends are exact.</summary>
    public static ImmutableArray<double> LogSpaced(double a, double b, int n)
    {
        if (n == 1) return [a];
        double la = Math.Log10(a), lb = Math.Log10(b);
        var v = new double[n];
        for (int i = 0; i < n; i++) v[i] = Math.Pow(10, la + (lb - la) * i / (n - 1));
        v[0] = a;
        v[n - 1] = b;
        return [.. v];
    }

    private static string Format(double v) => v.ToString("G6", CultureInfo.InvariantCulture);
}

using System.Collections.Immutable;
using System.Globalization;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Sweeps;

/// <summary>
/// One varied parameter of a sweep: a <see cref="ParameterPath"/> and its values (SI units), parsed from
/// <c>PATH=FROM:TO:COUNT</c> (evenly spaced, both ends included), <c>PATH=FROM:TO:COUNT:log</c> (evenly spaced in
/// log10) or <c>PATH=v1,v2,...</c> (a list). Values carry units as in scenario files (<c>5mK</c>, <c>20 kHz</c>).
/// </summary>
public sealed record SweepAxis(ParameterPath Path, ImmutableArray<double> Values, bool Logarithmic, string Text)
{
    /// <summary>The accepted forms, for error messages and help.</summary>
    public const string Forms = "PATH=FROM:TO:COUNT, PATH=FROM:TO:COUNT:log or PATH=v1,v2,... (values with units, e.g. modes.drum.bath.temperature=5mK:50mK:10)";

    /// <summary>Largest number of values one axis may have (a guard against typos such as 1e9 points).</summary>
    public const int MaxCount = 10_000_000;

    /// <summary>Parses one <c>--vary</c> specification against a scenario.</summary>
    /// <exception cref="InputException">The text is malformed, the path unknown, or a value out of range; the message names the path and the allowed forms.</exception>
    public static SweepAxis Parse(string text, Scenario scenario)
    {
        int eq = text.IndexOf('=');
        if (eq <= 0 || eq == text.Length - 1)
            throw new InputException($"--vary '{text}': expected {Forms}");
        string pathText = text[..eq].Trim();
        string valuesText = text[(eq + 1)..].Trim();
        ParameterPath path;
        try
        {
            path = ParameterPath.Parse(pathText, scenario);
        }
        catch (InputException e)
        {
            throw new InputException($"--vary '{text}': {e.Message}");
        }
        string where = $"--vary {path.Text}";
        ImmutableArray<double> values;
        bool log = false;
        if (valuesText.Contains(':'))
        {
            if (valuesText.Contains(','))
                throw new InputException($"{where}: '{valuesText}' mixes a range (:) and a list (,); expected {Forms}");
            string[] parts = valuesText.Split(':');
            if (parts.Length is < 3 or > 4)
                throw new InputException($"{where}: '{valuesText}' has {parts.Length} fields; expected {Forms}");
            if (parts.Length == 4)
            {
                if (!parts[3].Trim().Equals("log", StringComparison.OrdinalIgnoreCase))
                    throw new InputException($"{where}: the fourth field '{parts[3].Trim()}' must be 'log'; expected {Forms}");
                log = true;
            }
            double from = Value(path, where, parts[0]), to = Value(path, where, parts[1]);
            string countText = parts[2].Trim();
            if (!int.TryParse(countText, NumberStyles.None, CultureInfo.InvariantCulture, out int count) || count < 1 || count > MaxCount)
                throw new InputException($"{where}: COUNT '{countText}' must be a whole number from 1 to {MaxCount}; expected {Forms}");
            if (count == 1 && from != to)
                throw new InputException($"{where}: COUNT 1 needs FROM = TO (or give a single value, {path.Text}=VALUE)");
            if (log && (from <= 0 || to <= 0))
                throw new InputException($"{where}: a log range needs FROM > 0 and TO > 0, got {Format(from)} and {Format(to)}");
            values = log ? LogSpaced(from, to, count) : LinearlySpaced(from, to, count);
        }
        else
        {
            var list = valuesText.Split(',').Select(v => Value(path, where, v)).ToImmutableArray();
            if (list.Length > MaxCount) throw new InputException($"{where}: more than {MaxCount} values");
            values = list;
        }
        // Values the parameter refuses (ParameterPath.Set) are not rejected here: they become failed points with their
        // message in the table, so one bad corner does not cost the rest of the map.
        return new SweepAxis(path, values, log, $"{path.Text}={valuesText}");
    }

    private static double Value(ParameterPath path, string where, string text)
    {
        if (text.Trim().Length == 0) throw new InputException($"{where}: empty value; expected {Forms}");
        try
        {
            return path.ParseValue(text.Trim());
        }
        catch (InputException e)
        {
            throw new InputException($"{where}: {e.Message.Replace(path.Text + ": ", "")}; expected {Forms}");
        }
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

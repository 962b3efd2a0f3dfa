using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Sweeps;

/// <summary>
/// One varied parameter of a sweep: a <see cref="ParameterPath"/> and its values (SI units), parsed from
/// <c>PATH=RANGE</c> in the grammar of <see cref="Ranges"/> (<c>FROM:TO:COUNT</c>, <c>FROM:TO:+STEP</c>,
/// <c>FROM:TO:COUNT:log</c> or <c>v1,v2,...</c>). Values carry units as in scenario files (<c>5mK</c>, <c>20 kHz</c>).
/// </summary>
public sealed record SweepAxis(ParameterPath Path, ImmutableArray<double> Values, bool Logarithmic, string Text)
{
    /// <summary>The accepted forms, for error messages and help.</summary>
    public const string Forms = "PATH=FROM:TO:COUNT, PATH=FROM:TO:+STEP, PATH=FROM:TO:COUNT:log or PATH=v1,v2,... (values with units, e.g. modes.drum.bath.temperature=5mK:50mK:10)";

    /// <summary>Parses one varied parameter against a scenario.</summary>
    /// <exception cref="InputException">The text is malformed, the path unknown, or a value out of range; the message names the path and the allowed forms.</exception>
    public static SweepAxis Parse(string text, Scenario scenario)
    {
        int eq = text.IndexOf('=');
        if (eq <= 0 || eq == text.Length - 1)
            throw new InputException($"varied parameter '{text}': expected {Forms}");
        string pathText = text[..eq].Trim();
        string valuesText = text[(eq + 1)..].Trim();
        ParameterPath path;
        try
        {
            path = ParameterPath.Parse(pathText, scenario);
        }
        catch (InputException e)
        {
            throw new InputException($"varied parameter '{text}': {e.Message}");
        }
        // The path's own parser reads each value; its messages start with the path, which the range's message already names.
        var range = Ranges.Parse(valuesText, v => ValueOf(path, v), $"varied parameter {path.Text}", Forms);
        // Values the parameter refuses (ParameterPath.Set) are not rejected here: they become failed points with their
        // message in the table, so one bad corner does not cost the rest of the map.
        return new SweepAxis(path, range.Values, range.Logarithmic, $"{path.Text}={valuesText}");
    }

    private static double ValueOf(ParameterPath path, string text)
    {
        try
        {
            return path.ParseValue(text);
        }
        catch (InputException e)
        {
            throw new InputException(e.Message.Replace(path.Text + ": ", ""));
        }
    }
}

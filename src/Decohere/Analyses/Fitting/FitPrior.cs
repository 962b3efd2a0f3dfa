using System.Globalization;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Fitting;

/// <summary>
/// Prior knowledge of one parameter: Gaussian N(mean, sd²), adding ((x − mean)/sd)² to −2 ln L (a measurement of the
/// parameter, e.g. a calibration), or bounded to [low, high] (uniform: −2 ln L is unchanged inside, impossible outside).
/// The fit then maximises the posterior; with Gaussian priors it counts each as one more datum in the degrees of freedom.
/// </summary>
public sealed record FitPrior(string Path, double? Mean, double? Sd, double? Low, double? High)
{
    /// <summary>True for a Gaussian prior.</summary>
    public bool IsGaussian => Mean is not null;

    /// <summary>The prior's term of −2 ln L at x (SI units): +∞ outside a bound.</summary>
    public double Minus2LogPrior(double x) => IsGaussian
        ? Math.Pow((x - Mean!.Value) / Sd!.Value, 2)
        : x < Low!.Value || x > High!.Value ? double.PositiveInfinity : 0;

    /// <summary>Parses <c>PATH=MEAN±SD</c> (or <c>MEAN+-SD</c>) or <c>PATH=LOW..HIGH</c>, values in the path's units (<c>12 mK±1 mK</c>).</summary>
    /// <param name="text">The text.</param>
    /// <param name="scenario">The scenario whose path it names.</param>
    /// <param name="setting">The setting's name in errors (a fixed parameter is parsed the same way).</param>
    /// <exception cref="InputException">Malformed, an unknown path, or sd ≤ 0 / low ≥ high.</exception>
    public static FitPrior Parse(string text, Scenario scenario, string setting = "prior")
    {
        int eq = text.IndexOf('=');
        if (eq <= 0) throw new InputException($"{setting}: '{text}' must be PATH=MEAN±SD or PATH=LOW..HIGH, e.g. modes.drum.bath.occupancy=50±5");
        var path = ParameterPath.Parse(text[..eq], scenario);
        string spec = text[(eq + 1)..].Trim();
        string[] gaussian = spec.Split(["±", "+-"], StringSplitOptions.TrimEntries);
        if (gaussian.Length == 2)
        {
            double mean = path.ParseValue(gaussian[0]), sd = path.ParseValue(gaussian[1]);
            if (!(sd > 0)) throw new InputException($"{setting}: {path.Text}: the standard deviation must be > 0 (got {Format(sd)})");
            return new FitPrior(path.Text, mean, sd, null, null);
        }
        string[] bounds = spec.Split("..", StringSplitOptions.TrimEntries);
        if (bounds.Length == 2)
        {
            double low = path.ParseValue(bounds[0]), high = path.ParseValue(bounds[1]);
            if (!(low < high)) throw new InputException($"{setting}: {path.Text}: the lower bound must be below the upper ({Format(low)} .. {Format(high)})");
            return new FitPrior(path.Text, null, null, low, high);
        }
        throw new InputException($"{setting}: '{spec}' must be MEAN±SD (or MEAN+-SD) or LOW..HIGH");
    }

    private static string Format(double v) => v.ToString("G6", CultureInfo.InvariantCulture);
}

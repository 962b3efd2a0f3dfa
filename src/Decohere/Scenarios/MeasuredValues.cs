using System.Collections.Immutable;
using System.Globalization;
using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>One scenario parameter measured elsewhere (a fit, a noise calibration): value and standard error in SI units (Sd NaN: none).</summary>
public sealed record MeasuredValue(string Path, double Value, double Sd, string Source);

/// <summary>
/// Values measured elsewhere and put into a scenario before planning (fitted bath, damping, added noise), with the
/// correlation of their errors (from the fit that made them; values from different sources are uncorrelated). Planning
/// analyses carry their standard errors into what they predict.
/// </summary>
public sealed class MeasuredValues
{
    private readonly double[,] _correlation;

    private MeasuredValues(ImmutableArray<MeasuredValue> values, double[,] correlation)
    {
        Values = values;
        _correlation = correlation;
    }

    /// <summary>No values.</summary>
    public static MeasuredValues None { get; } = new([], new double[0, 0]);

    /// <summary>The values, in order.</summary>
    public ImmutableArray<MeasuredValue> Values { get; }

    /// <summary>Correlation of the errors of values <paramref name="i"/> and <paramref name="j"/>.</summary>
    public double Correlation(int i, int j) => _correlation[i, j];

    /// <summary>Values from one source with the correlation matrix of their errors (null: uncorrelated).</summary>
    /// <exception cref="InputException">The matrix does not match the values.</exception>
    public static MeasuredValues From(IReadOnlyList<MeasuredValue> values, double[,]? correlation = null)
    {
        int n = values.Count;
        var r = new double[n, n];
        if (correlation is not null && (correlation.GetLength(0) != n || correlation.GetLength(1) != n))
            throw new InputException($"measured values: a {correlation.GetLength(0)}×{correlation.GetLength(1)} correlation matrix for {n} values");
        for (int i = 0; i < n; i++)
            for (int j = 0; j < n; j++) r[i, j] = i == j ? 1 : correlation is null || !double.IsFinite(correlation[i, j]) ? 0 : correlation[i, j];
        return new([.. values], r);
    }

    /// <summary>These values and <paramref name="other"/>'s, uncorrelated with each other.</summary>
    /// <exception cref="InputException">A parameter is given by both.</exception>
    public MeasuredValues And(MeasuredValues other)
    {
        foreach (var v in other.Values)
            if (Values.FirstOrDefault(w => w.Path == v.Path) is { } w)
                throw new InputException($"measured values: {v.Path} is given by both {w.Source} and {v.Source}");
        int a = Values.Length, n = a + other.Values.Length;
        var r = new double[n, n];
        for (int i = 0; i < n; i++)
            for (int j = 0; j < n; j++)
                r[i, j] = i < a && j < a ? _correlation[i, j] : i >= a && j >= a ? other._correlation[i - a, j - a] : 0;
        return new([.. Values, .. other.Values], r);
    }

    /// <summary>
    /// The scenario with every value set. Its source text gains a comment listing them (and so a new hash), so that every
    /// output's provenance records what the scenario file alone does not say.
    /// </summary>
    /// <exception cref="InputException">A path is not a parameter of the scenario, or a value is out of its range; the message names the source.</exception>
    public Scenario Apply(Scenario scenario)
    {
        if (Values.IsEmpty) return scenario;
        foreach (var v in Values)
        {
            try
            {
                scenario = ParameterPath.Parse(v.Path, scenario).Set(scenario, v.Value);
            }
            catch (InputException e)
            {
                throw new InputException($"measured values from {v.Source}: {e.Message}");
            }
        }
        string text = scenario.SourceText.TrimEnd('\n') + "\n# measured values applied (SI units):\n" + string.Concat(Describe().Select(line => $"#   {line}\n"));
        return scenario with { SourceText = text, SourceHash = ScenarioLoader.Hash(text) };
    }

    /// <summary>
    /// The standard deviation of a prediction from the change it shows per +1σ of each value (first-order propagation with
    /// the values' correlations, JCGM 100:2008, Guide to the Expression of Uncertainty in Measurement, eq. 13); null when a
    /// change is unknown.
    /// </summary>
    public double? Propagate(IReadOnlyList<double?> changePerSd)
    {
        double variance = 0;
        for (int i = 0; i < Values.Length; i++)
            for (int j = 0; j < Values.Length; j++)
            {
                if (!double.IsFinite(Values[i].Sd) || !double.IsFinite(Values[j].Sd)) continue;
                if (changePerSd[i] is not { } a || changePerSd[j] is not { } b) return null;
                variance += a * _correlation[i, j] * b;
            }
        return Math.Sqrt(Math.Max(variance, 0));
    }

    /// <summary>"path = value ± sd (source)" lines, for notes.</summary>
    public IEnumerable<string> Describe() => Values.Select(v =>
        string.Create(CultureInfo.InvariantCulture, $"{v.Path} = {v.Value:G5}{(double.IsFinite(v.Sd) ? $" ± {v.Sd:G3}" : "")} (SI, from {v.Source})"));
}

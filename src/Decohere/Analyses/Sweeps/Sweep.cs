using System.Collections.Immutable;
using System.Text.Json;
using System.Text.Json.Serialization;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Sweeps;

/// <summary>
/// A sweep as a problem: the template scenario, the grid of parameter values and the metrics per point.
/// Every point is <c>template with</c> its parameters set, evaluated on its own with its own seed, so the table does
/// not depend on how the points are split over shards, threads or runs.
/// </summary>
public sealed class Sweep
{
    // The template's stage models, built once on first use and shared by every point.
    private readonly Lazy<SweepTemplate> _shared;

    /// <summary>Metadata key of the sweep's description (JSON) in every sweep table, part and chunk file.</summary>
    public const string MetadataKey = "decohere.sweep";

    /// <summary>The scenario the points are modified copies of.</summary>
    public Scenario Template { get; }

    /// <summary>The points.</summary>
    public SweepGrid Grid { get; }

    /// <summary>The metrics, in column order.</summary>
    public ImmutableArray<Metric> Metrics { get; }

    /// <summary>The sweep's description, as stored in the files' metadata.</summary>
    public SweepDescription Description { get; }

    /// <summary>Builds a sweep.</summary>
    public Sweep(Scenario template, SweepGrid grid, ImmutableArray<Metric> metrics)
    {
        if (metrics.IsDefaultOrEmpty) throw new InputException("metrics: give at least one metric");
        Template = template;
        Grid = grid;
        Metrics = metrics;
        _shared = new(() => new SweepTemplate(template));
        Description = new SweepDescription(template.SourceHash, template.Seed, grid.Zip, grid.PointCount,
            [.. grid.Axes.Select(a => new SweepDescription.Axis(a.Path.Text, a.Path.ColumnName, a.Text, a.Logarithmic, a.Values))],
            [.. metrics.Select(m => new SweepDescription.MetricColumn(m.Spec, m.Column))]);
    }

    /// <summary>Parses the textual form: one <c>PATH=SPEC</c> per varied parameter, whether to zip the axes, and the metric list.</summary>
    /// <exception cref="InputException">Any bad part; the message names it and the allowed forms.</exception>
    public static Sweep Parse(Scenario template, IReadOnlyList<string> vary, bool zip, string? metrics)
    {
        var axes = vary.Select(v => SweepAxis.Parse(v, template)).ToList();
        return new Sweep(template, SweepGrid.Create(axes, zip), Sweeps.Metrics.ParseList(metrics, template));
    }

    /// <summary>The seed of a point: from (scenario seed, point index) only, never shards, threads or order.</summary>
    public long SeedOf(long point) => Seeds.DeriveSeed(Template.Seed, SeedStream.SweepPoint, point);

    /// <summary>Footer metadata of the sweep table: the run's provenance plus the description under <see cref="MetadataKey"/>.</summary>
    public IReadOnlyDictionary<string, string> Metadata()
    {
        var kv = Provenance.For(Template).ToKeyValues().ToDictionary();
        kv[MetadataKey] = Description.ToJson();
        return kv;
    }

    /// <summary>
    /// Evaluates one point. A parameter value the scenario refuses, or a metric that fails (no steady state of an unstable
    /// stage, a readout past the end), is recorded in the row's error text with that metric null; it never throws for them.
    /// </summary>
    public SweepRow Evaluate(long point)
    {
        var values = new double[Grid.Axes.Length];
        Grid.ValuesAt(point, values);
        long seed = SeedOf(point);
        var results = new double?[Metrics.Length];
        var errors = new List<string>();
        SweepPoint? p = null;
        try
        {
            p = new SweepPoint(point, seed, Grid.Apply(Template, values), _shared.Value);
        }
        catch (Exception e) when (e is not OperationCanceledException and not OutOfMemoryException)
        {
            errors.Add(Message(e));
        }
        if (p is not null)
        {
            for (int m = 0; m < Metrics.Length; m++)
            {
                try
                {
                    double v = Metrics[m].Evaluate(p);
                    results[m] = double.IsNaN(v) ? null : v;
                    if (double.IsNaN(v)) errors.Add($"{Metrics[m].Spec}: not a number");
                }
                catch (Exception e) when (e is not OperationCanceledException and not OutOfMemoryException)
                {
                    string message = Message(e);
                    // A failure shared by every metric (the dynamics cannot be solved) is reported once.
                    if (!errors.Contains(message)) errors.Add(message);
                }
            }
        }
        return new SweepRow(point, seed, values, results, string.Join("; ", errors));
    }

    private static string Message(Exception e) =>
        e is InputException or Numerics.UnstableDynamicsException ? e.Message : $"{e.GetType().Name}: {e.Message}";
}

/// <summary>One row of a sweep table: point index, seed, parameter values (SI), metric values (null where failed), error text ("" if none).</summary>
public sealed record SweepRow(long Point, long Seed, double[] Parameters, double?[] Metrics, string Error);

/// <summary>
/// What a sweep file records about its sweep (key <c>decohere.sweep</c>): enough to check that parts belong together
/// and to plot the table without the scenario.
/// </summary>
public sealed record SweepDescription(
    [property: JsonPropertyName("scenario_sha256")] string ScenarioSha256,
    [property: JsonPropertyName("seed")] long Seed,
    [property: JsonPropertyName("zip")] bool Zip,
    [property: JsonPropertyName("points")] long Points,
    [property: JsonPropertyName("axes")] ImmutableArray<SweepDescription.Axis> Axes,
    [property: JsonPropertyName("metrics")] ImmutableArray<SweepDescription.MetricColumn> Metrics)
{
    /// <summary>A varied parameter: path, column, its PATH=SPEC text, whether log-spaced, and its values (SI).</summary>
    public sealed record Axis(
        [property: JsonPropertyName("path")] string Path,
        [property: JsonPropertyName("column")] string Column,
        [property: JsonPropertyName("vary")] string Vary,
        [property: JsonPropertyName("log")] bool Log,
        [property: JsonPropertyName("values")] ImmutableArray<double> Values);

    /// <summary>A metric: its canonical spec and its column.</summary>
    public sealed record MetricColumn(
        [property: JsonPropertyName("metric")] string Spec,
        [property: JsonPropertyName("column")] string Column);

    /// <summary>Compact JSON (doubles round-trip exactly).</summary>
    public string ToJson() => JsonSerializer.Serialize(this, IO.DecohereJsonContext.Default.SweepDescription);

    /// <summary>Reads the JSON written by <see cref="ToJson"/>.</summary>
    /// <exception cref="InputException">Not a sweep description.</exception>
    public static SweepDescription FromJson(string json, string source)
    {
        try
        {
            return JsonSerializer.Deserialize(json, IO.DecohereJsonContext.Default.SweepDescription) ?? throw new JsonException("null");
        }
        catch (JsonException e)
        {
            throw new InputException($"{source}: the {Sweep.MetadataKey} metadata is not a sweep description ({e.Message})");
        }
    }
}

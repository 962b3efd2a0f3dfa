using System.Collections.Immutable;
using System.Globalization;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Engine;
using Decohere.Model;
using Decohere.Numerics;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Sweeps;

/// <summary>
/// One point of a sweep while its metrics are evaluated: the modified scenario, its seed, and what the metrics need of
/// its dynamics, each computed once on first use and shared by every metric of the point. Steady states and stability
/// come straight from the stage models (see <see cref="SteadyState"/>); the states at stage ends propagate the whole
/// scenario. Not thread-safe (one point, one thread).
/// </summary>
public sealed class SweepPoint
{
    private readonly SweepTemplate? _template;
    private readonly LinearModel?[] _models;
    private readonly GaussianState?[] _steady;
    private readonly AnalysedDrift?[] _drifts;
    private readonly Stability?[] _stability;
    private readonly LifetimeCore?[] _lifetimes;
    private Dynamics? _dynamics;
    private bool? _solvable;

    /// <summary>A point of a scenario, its models built from it.</summary>
    public SweepPoint(long index, long seed, Scenario scenario) : this(index, seed, scenario, null) { }

    /// <summary>A point of a sweep, its models derived from the template's.</summary>
    internal SweepPoint(long index, long seed, Scenario scenario, SweepTemplate? template)
    {
        Index = index;
        Seed = seed;
        Scenario = scenario with { Seed = seed };
        _template = template;
        int stages = scenario.Stages.Length;
        _models = new LinearModel?[stages];
        _steady = new GaussianState?[stages];
        _drifts = new AnalysedDrift?[stages];
        _stability = new Stability?[stages];
        _lifetimes = new LifetimeCore?[stages];
    }

    /// <summary>Point index in the grid.</summary>
    public long Index { get; }

    /// <summary>The point's own seed (for metrics that sample); also set as the scenario's seed.</summary>
    public long Seed { get; }

    /// <summary>The scenario at this point.</summary>
    public Scenario Scenario { get; }

    /// <summary>The solved dynamics (all stages, every boundary state).</summary>
    public Dynamics Dynamics => _dynamics ??= Dynamics.Solve(Scenario);

    /// <summary>The linear model of a stage.</summary>
    public LinearModel Model(int stage) =>
        _models[stage] ??= _template?.Models.For(Scenario, stage) ?? ModelBuilder.Build(Scenario, Scenario.Stages[stage]);

    /// <summary>Stability of a stage, straight from its drift (so it is reported even when the dynamics cannot be solved).</summary>
    public Stability Stability(int stage) =>
        _stability[stage] ??= _dynamics?.Stabilities[stage] ?? Drift(stage).Stability;

    // The sweep's points share the analysis of each drift they have in common.
    private AnalysedDrift Drift(int stage) =>
        _drifts[stage] ??= _template?.Drift(Model(stage).Drift) ?? new AnalysedDrift(LyapunovOperator.Of(Model(stage).Drift));

    /// <summary>
    /// The steady state of a stage, as <see cref="Dynamics.SteadyState"/> gives it: the one Lyapunov solver on the stage's
    /// model. A point that <see cref="Dynamics.Solve"/> would accept needs no propagation for it; any other (and an
    /// unstable stage) goes through <see cref="Dynamics"/>, so the failure reads as it does everywhere else.
    /// </summary>
    public GaussianState SteadyState(int stage)
    {
        if (_steady[stage] is { } known) return known;
        if (_dynamics is not null || !Solvable() || !Stability(stage).IsStable) return _steady[stage] = Dynamics.SteadyState(stage);
        var model = Model(stage);
        return _steady[stage] = new GaussianState(Vector<double>.Build.Dense(model.Dimension), Drift(stage).Operator.Solve(model.Diffusion).Covariance,
            model.ModeNames);
    }

    /// <summary>The lifetimes after a stage (no sensitivities), computed once and shared by the lifetime metrics.</summary>
    public LifetimeCore Lifetimes(int stage) =>
        _lifetimes[stage] ??= LifetimeAnalysis.Analyze(Scenario,
            new LifetimeSettings { AfterStage = Scenario.Stages[stage].Name, Sensitivities = false, CurvePoints = 2 });

    // The refusals of Dynamics.Solve that do not need the propagation: rates that overflow, a stage amplifying past
    // Dynamics.MaxGrowthFolds, steady initial modes without a steady first stage. A point clear of them solves.
    private bool Solvable()
    {
        if (_solvable is { } known) return known;
        var stages = Scenario.Stages;
        bool solvable = true;
        for (int i = 0; i < stages.Length && solvable; i++)
            solvable = AllFinite(Model(i).Drift) && AllFinite(Model(i).Diffusion);
        for (int i = 0; i < stages.Length && solvable; i++)
            solvable = !(Stability(i).GrowthRate * stages[i].DurationS > Dynamics.MaxGrowthFolds);
        if (solvable && (_template?.StartsSteady(Scenario) ?? StartsSteady(Scenario))) solvable = Stability(0).IsStable;
        return (_solvable = solvable).Value;
    }

    /// <summary>Whether some mode starts in the first stage's steady state.</summary>
    internal static bool StartsSteady(Scenario scenario) => scenario.Initial.Values.Any(s => s is InitialState.Steady);

    private static bool AllFinite(Matrix<double> m)
    {
        foreach (double x in m.AsColumnMajorArray() ?? m.ToColumnMajorArray())
            if (!double.IsFinite(x)) return false;
        return true;
    }
}

/// <summary>
/// What the points of one sweep share: the template's stage models, and the analysis (eigenvalues, Lyapunov
/// factorisation) of every drift met so far, keyed on its exact entries, so that points differing only in their
/// diffusion (bath temperatures) do not analyse their drift again.
/// </summary>
internal sealed class SweepTemplate(Scenario template)
{
    // At most this many distinct drifts are kept; past it, a point's drift is analysed for that point alone.
    private readonly ExactMemo<AnalysedDrift> _drifts = new(4096);

    /// <summary>The template's models, and the fast path to each point's.</summary>
    public StageModels Models { get; } = new(template);

    private readonly bool _startsSteady = SweepPoint.StartsSteady(template);

    /// <summary><see cref="SweepPoint.StartsSteady"/>, read once for the points that keep the template's initial states.</summary>
    public bool StartsSteady(Scenario point) => ReferenceEquals(point.Initial, template.Initial) ? _startsSteady : SweepPoint.StartsSteady(point);

    /// <summary>The analysed drift (a race analyses the same drift twice; either copy serves).</summary>
    public AnalysedDrift Drift(Matrix<double> drift) =>
        _drifts.GetOrAdd(drift.AsColumnMajorArray() ?? drift.ToColumnMajorArray(), () => new AnalysedDrift(LyapunovOperator.Of(drift)));
}

/// <summary>A stage's drift analysed: its Lyapunov operator and the stability read from it.</summary>
internal sealed class AnalysedDrift(LyapunovOperator drift)
{
    public LyapunovOperator Operator { get; } = drift;

    public Stability Stability { get; } = Stability.Of(drift);
}

/// <summary>A metric bound to a sweep: its canonical spec (<c>steady_squeezing_db:squeeze</c>), column name (unit in the name) and function.</summary>
public sealed record Metric(string Spec, string Column, string Description, Func<SweepPoint, double> Evaluate);

/// <summary>What the text after a metric's colon names.</summary>
public enum MetricArgument { None, Stage, Mode, Delay }

/// <summary>
/// An entry of the metric registry. <paramref name="Bind"/> resolves the argument against the sweep's template scenario
/// (null argument: the default) and returns the metric.
/// </summary>
public sealed record MetricDefinition(string Name, MetricArgument Argument, string Description, Func<Scenario, string?, Metric> Bind);

/// <summary>
/// The metric registry: the one place that maps a metric name to its column and its function of a sweep point.
/// A new metric is one <see cref="MetricDefinition"/> in <see cref="All"/>. Stage metrics default to the last stage
/// with tones; mode metrics to the readout mode, else the first mechanical mode.
/// </summary>
public static class Metrics
{
    /// <summary>Every metric, in the order listed in help.</summary>
    public static ImmutableArray<MetricDefinition> All { get; } =
    [
        StageMoment("steady_var_min", "", "steady-state minimum quadrature variance of the stage (quanta; 0.5 = zero-point)",
            (p, stage, mode) => p.SteadyState(stage).Moments(mode).VarMin),
        StageMoment("steady_squeezing_db", "", "steady-state squeezing of the stage, 10·log10(0.5/var_min) (dB, > 0 below zero-point)",
            (p, stage, mode) => p.SteadyState(stage).Moments(mode).SqueezingDb),
        StageMoment("end_var_min", "", "minimum quadrature variance at the end of the stage (quanta)",
            (p, stage, mode) => p.Dynamics.Boundaries[stage + 1].Moments(mode).VarMin),
        StageMoment("end_squeezing_db", "", "squeezing at the end of the stage (dB)",
            (p, stage, mode) => p.Dynamics.Boundaries[stage + 1].Moments(mode).SqueezingDb),
        StageMoment("end_occupancy", "", "occupancy at the end of the stage (quanta)",
            (p, stage, mode) => p.Dynamics.Boundaries[stage + 1].Moments(mode).Occupancy),
        new("max_re_lambda", MetricArgument.Stage, "stability: largest real part of the stage's drift eigenvalues (s⁻¹; < 0 stable, else the growth rate)",
            (s, arg) => StageBound(s, arg, "max_re_lambda", "_per_s", "stability of the stage", (p, stage, _) => p.Stability(stage).MaxRealPart)),
        new("thermal_decoherence_rate", MetricArgument.Mode, "thermal decoherence rate γ·n_th of the mode in its own bath (s⁻¹)",
            (s, arg) =>
            {
                string mode = ModeArgument(s, arg, "thermal_decoherence_rate");
                return new Metric($"thermal_decoherence_rate:{mode}", $"thermal_decoherence_rate_per_s.{mode}", "γ·n_th",
                    p => p.Scenario.ModeNamed(mode) is var m ? Physics.ThermalDecoherenceRate(m.DecayRate, m.Bath.Occupancy) : 0);
            }),
        new("added_noise", MetricArgument.None, "the readout's added noise per quadrature referred to the measured mode (quanta; from the readout chain)",
            (s, _) => s.Readout is null
                ? throw new InputException("metrics: added_noise needs a readout section in the scenario")
                : new Metric("added_noise", "added_noise", "readout added noise, input-referred (quanta)", p => ReadoutChains.For(p.Scenario).AddedNoise)),
        new("resolution_probability", MetricArgument.Delay,
            "probability that the readout's one-sided 95% upper bound on var_min is below zero-point, at the readout's last delay or :DELAY (exact χ², no sampling)",
            BindResolution),
        new("physical_lifetime", MetricArgument.Stage,
            "time the squeezed quadrature stays below zero-point after the end of the last driven stage or :STAGE (s; null if it outlives the search)",
            (s, arg) => BindLifetime(s, arg, "physical_lifetime", core => (core.PhysicalLifetimeS, core.PhysicalStatus))),
        new("observable_lifetime", MetricArgument.Stage,
            "longest delay after the last driven stage or :STAGE at which the readout resolves the squeezing, median-measurement criterion (s; null if never)",
            (s, arg) => BindLifetime(s, arg, "observable_lifetime", core => (core.ObservableLifetimeS, core.ObservableStatus))),
    ];

    /// <summary>The metrics a sweep computes when none are named: steady squeezing and stability of the last stage with tones.</summary>
    public static string Default => "steady_squeezing_db,max_re_lambda";

    /// <summary>Names with their argument, for help and messages (<c>steady_squeezing_db[:STAGE]</c>).</summary>
    public static IEnumerable<string> Usage => All.Select(d => d.Argument == MetricArgument.None ? d.Name : $"{d.Name}[:{d.Argument.ToString().ToUpperInvariant()}]");

    /// <summary>Parses a comma-separated list of metrics (null or empty: <see cref="Default"/>) against the template.</summary>
    /// <exception cref="InputException">An unknown or unavailable metric or a bad argument; the message lists the allowed ones.</exception>
    public static ImmutableArray<Metric> ParseList(string? list, Scenario template)
    {
        string text = string.IsNullOrWhiteSpace(list) ? Default : list;
        var metrics = text.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries).Select(m => Parse(m, template)).ToImmutableArray();
        var repeated = metrics.GroupBy(m => m.Column).FirstOrDefault(g => g.Count() > 1);
        if (repeated is not null) throw new InputException($"metrics: {repeated.First().Spec} is listed more than once");
        return metrics;
    }

    /// <summary>Parses one metric, <c>NAME</c> or <c>NAME:ARGUMENT</c>.</summary>
    public static Metric Parse(string text, Scenario template)
    {
        int colon = text.IndexOf(':');
        string name = (colon < 0 ? text : text[..colon]).Trim();
        string? argument = colon < 0 ? null : text[(colon + 1)..].Trim();
        var definition = All.FirstOrDefault(d => d.Name == name)
            ?? throw new InputException($"metrics: unknown metric '{name}'; metrics: {string.Join(", ", Usage)}");
        if (argument is not null && definition.Argument == MetricArgument.None)
            throw new InputException($"metrics: '{name}' takes no argument (got ':{argument}')");
        if (argument is { Length: 0 })
            throw new InputException($"metrics: '{name}:' has an empty {definition.Argument.ToString().ToLowerInvariant()}");
        return definition.Bind(template, argument);
    }

    private static MetricDefinition StageMoment(string name, string unit, string description, Func<SweepPoint, int, string, double> f) =>
        new(name, MetricArgument.Stage, description, (s, arg) => StageBound(s, arg, name, unit, description, f));

    private static Metric StageBound(Scenario s, string? arg, string name, string unit, string description, Func<SweepPoint, int, string, double> f)
    {
        int stage = StageArgument(s, arg, name);
        string stageName = s.Stages[stage].Name;
        string mode = DefaultMode(s, name);
        return new Metric($"{name}:{stageName}", $"{name}{unit}.{stageName}", $"{description}; mode {mode}", p => f(p, stage, mode));
    }

    private static int StageArgument(Scenario s, string? arg, string metric)
    {
        if (arg is null)
        {
            for (int i = s.Stages.Length - 1; i >= 0; i--)
                if (s.Stages[i].Tones.Length > 0) return i;
            return s.Stages.Length - 1;
        }
        for (int i = 0; i < s.Stages.Length; i++)
            if (s.Stages[i].Name == arg) return i;
        throw new InputException($"metrics: {metric}:{arg}: no stage '{arg}'; stages: {string.Join(", ", s.Stages.Select(st => st.Name))}");
    }

    private static string DefaultMode(Scenario s, string metric)
    {
        if (s.Readout is not null) return s.Readout.Mode;
        return s.Modes.FirstOrDefault(m => m.Kind == ModeKind.Mechanical)?.Name
            ?? throw new InputException($"metrics: {metric} needs a mechanical mode or a readout; the scenario has neither");
    }

    private static string ModeArgument(Scenario s, string? arg, string metric)
    {
        if (arg is null) return DefaultMode(s, metric);
        if (s.Modes.Any(m => m.Name == arg)) return arg;
        throw new InputException($"metrics: {metric}:{arg}: no mode '{arg}'; modes: {string.Join(", ", s.Modes.Select(m => m.Name))}");
    }

    // The planning module's lifetime analysis (no sensitivities). A lifetime that does not exist (never resolved,
    // outlives the search) leaves the value null with its status as the point's error text.
    private static Metric BindLifetime(Scenario s, string? arg, string name, Func<LifetimeCore, (double? Value, LifetimeStatus Status)> pick)
    {
        int stage = StageArgument(s, arg, name);
        string stageName = s.Stages[stage].Name;
        return new Metric($"{name}:{stageName}", $"{name}_s.{stageName}", $"{name} after stage {stageName}",
            p => pick(p.Lifetimes(stage)) is var (value, status) && value is { } v
                ? v
                : throw new InvalidOperationException($"{name}: {status}"));
    }

    private static Metric BindResolution(Scenario s, string? arg)
    {
        const string name = "resolution_probability";
        var readout = s.Readout ?? throw new InputException($"metrics: {name} needs a readout section in the scenario");
        double delay;
        if (arg is null)
        {
            if (readout.DelaysS.Length == 0) throw new InputException($"metrics: {name}: the readout has no delays; give one as {name}:DELAY");
            delay = readout.DelaysS[^1];
        }
        else if (!Quantity.TryParse(arg, Dimension.Time, out delay, out string? error) || delay < 0)
            throw new InputException($"metrics: {name}:{arg}: {error ?? "the delay must be >= 0"}");
        string stage = readout.Stage, mode = readout.Mode;
        string delayText = delay.ToString("R", CultureInfo.InvariantCulture);
        return new Metric($"{name}:{delayText} s", $"{name}.delay_{delayText}_s",
            $"probability that readout of {mode} at {Quantity.Format(delay, Dimension.Time)} after the start of '{stage}' resolves squeezing",
            p =>
            {
                var sc = p.Scenario;
                double t = sc.StageStarts[sc.StageIndex(stage)] + delay;
                if (p.Dynamics.IsPastEnd(t))
                    throw new InputException($"{name}: the readout at {Quantity.Format(delay, Dimension.Time)} after the start of '{stage}' is past the end of the last stage");
                double varMin = p.Dynamics.StateAt(t).Moments(mode).VarMin;
                return VarianceStatistics.ResolutionProbability(varMin, ReadoutChains.For(sc).AddedNoise, sc.Readout!.Shots);
            });
    }
}

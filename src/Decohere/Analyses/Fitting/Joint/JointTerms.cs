using System.Collections.Immutable;
using Decohere.Analyses.Cooling;
using Decohere.Analyses.Ringdown;
using Decohere.Analyses.Spectra;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting.Joint;

/// <summary>One measured point of a data set, for tables and plots: what it is, where it lies and its standard error if stated.</summary>
/// <param name="Quantity">What was measured (<c>var_i</c>, <c>occupancy</c>, <c>energy</c>, …).</param>
/// <param name="X">The abscissa (delay or time in s, cooperativity).</param>
/// <param name="Observed">The measured value.</param>
/// <param name="Error">Its standard error where the data state one (occupancies, amplitudes with σ); null otherwise.</param>
public readonly record struct JointPoint(string Quantity, double X, double Observed, double? Error);

/// <summary>
/// A data set as a term of the joint likelihood: the joint parameter vector in, its deviance (−2 ln L up to a constant that
/// does not depend on the parameters) out. Each term is built from the likelihood its own analysis uses, so a data set
/// fitted jointly and alone sees the same model.
/// </summary>
public interface IJointTerm
{
    /// <summary>The data set's name in the fit file.</summary>
    string Name { get; }

    /// <summary>The kind keyword: delays, ringdown or cooling.</summary>
    string Kind { get; }

    /// <summary>The data file, for messages and reports.</summary>
    string Source { get; }

    /// <summary>The name and unit of the abscissa (<c>delay</c>, <c>s</c>).</summary>
    (string Name, string Unit) Axis { get; }

    /// <summary>The unit of the measured values (<c>quanta</c>, <c>data units</c>).</summary>
    string ValueUnit { get; }

    /// <summary>Which joint parameters the term reads, by key of the data set (<c>modes.drum.linewidth</c> → index).</summary>
    ImmutableArray<(string Key, int Index)> Uses { get; }

    /// <summary>Independent statistics the deviance sums (for degrees of freedom).</summary>
    int Statistics { get; }

    /// <summary>True when the minimum of <see cref="Deviance"/> is a goodness-of-fit statistic (known errors); false when a scale is profiled out or the law is far from χ².</summary>
    bool Absolute { get; }

    /// <summary>A one-line description of the likelihood.</summary>
    string Likelihood { get; }

    /// <summary>The measured points, in the order of <see cref="Model"/>.</summary>
    ImmutableArray<JointPoint> Points { get; }

    /// <summary>The deviance at the joint parameter vector <paramref name="x"/> (natural units, SI).</summary>
    double Deviance(double[] x, CancellationToken cancel);

    /// <summary>The model's value of each point at <paramref name="x"/>.</summary>
    double[] Model(double[] x, CancellationToken cancel);

    /// <summary>The standardised residual of each point against <paramref name="model"/>; NaN where the law has none.</summary>
    double[] Residuals(double[] model);

    /// <summary>The data set's scenario with its parameters at <paramref name="x"/>, or null for a kind without one.</summary>
    Scenario? Fitted(double[] x);
}

/// <summary>What the terms modelled by a scenario share.</summary>
public static class JointTerm
{
    /// <summary>The scenario with each path set from its entry of the joint vector <paramref name="x"/>.</summary>
    public static Scenario Set(Scenario scenario, ImmutableArray<(ParameterPath Path, int Index)> paths, double[] x)
    {
        foreach (var (path, index) in paths) scenario = path.Set(scenario, x[index]);
        return scenario;
    }
}

/// <summary>
/// Shots, variances or occupancies against delay, modelled by a scenario's readout as <c>fit</c> does: the scenario's
/// paths are set from the joint vector, <see cref="ReadoutModel.Predict(Scenario, IReadOnlyList{double}, CancellationToken)"/>
/// gives the readout's covariance at each delay and <see cref="DataLikelihood.Total"/> its exact deviance.
/// </summary>
public sealed class DelayTerm : IJointTerm
{
    private readonly ReadoutModel _model;
    private readonly double[] _delays;

    /// <summary>A term of <paramref name="data"/> (in quanta) under <paramref name="scenario"/> with <paramref name="paths"/> set from the joint indices.</summary>
    public DelayTerm(string name, Scenario scenario, FitData data, ImmutableArray<(ParameterPath Path, int Index)> paths)
    {
        Name = name;
        Scenario = scenario;
        Data = data;
        Paths = paths;
        _model = new ReadoutModel(scenario, [.. paths.Select(p => p.Path)]);
        _delays = [.. data.Delays.Select(d => d.DelayS)];
        Points = data.Shape == DataShape.Occupancies
            ? [.. data.Delays.Select(d => new JointPoint("occupancy", d.DelayS, d.Occupancy, d.OccupancyError))]
            : [.. data.Delays.SelectMany(d => new[] { new JointPoint("var_i", d.DelayS, d.VarI, null), new JointPoint("var_q", d.DelayS, d.VarQ, null) })];
    }

    /// <summary>The scenario before the joint parameters are set.</summary>
    public Scenario Scenario { get; }

    /// <summary>The data, in quanta.</summary>
    public FitData Data { get; }

    /// <summary>The same term with other data (a calibration's data converted at another gain).</summary>
    public DelayTerm With(FitData data) => new(Name, Scenario, data, Paths);

    /// <summary>The scenario paths set from the joint vector.</summary>
    public ImmutableArray<(ParameterPath Path, int Index)> Paths { get; }

    /// <inheritdoc/>
    public string Name { get; }
    /// <inheritdoc/>
    public string Kind => "delays";
    /// <inheritdoc/>
    public string Source => Data.Source;
    /// <inheritdoc/>
    public (string Name, string Unit) Axis => ("delay", "s");
    /// <inheritdoc/>
    public string ValueUnit => "quanta";
    /// <inheritdoc/>
    public ImmutableArray<(string Key, int Index)> Uses => [.. Paths.Select(p => (p.Path.Text, p.Index))];
    /// <inheritdoc/>
    public int Statistics => DataLikelihood.Terms(Data);
    /// <inheritdoc/>
    public bool Absolute => true;
    /// <inheritdoc/>
    public string Likelihood => DataLikelihood.Describe(Data);
    /// <inheritdoc/>
    public ImmutableArray<JointPoint> Points { get; }

    private double[] Local(double[] x) => [.. Paths.Select(p => x[p.Index])];

    /// <inheritdoc/>
    public double Deviance(double[] x, CancellationToken cancel) => DataLikelihood.Total(Data, _model.Predict(Local(x), _delays, cancel));

    /// <inheritdoc/>
    public double[] Model(double[] x, CancellationToken cancel)
    {
        var predictions = _model.Predict(Local(x), _delays, cancel);
        return Data.Shape == DataShape.Occupancies ? [.. predictions.Select(p => p.Occupancy)] : [.. predictions.SelectMany(p => new[] { p.VarI, p.VarQ })];
    }

    /// <inheritdoc/>
    public double[] Residuals(double[] model)
    {
        // A sample variance of N shots has standard deviation σ²·√(2/(N − 1)) about its mean σ² (NIST/SEMATECH e-Handbook, sec. 7.2.3).
        if (Data.Shape == DataShape.Occupancies) return [.. Points.Select((p, k) => (p.Observed - model[k]) / p.Error!.Value)];
        return [.. Points.Select((p, k) => (p.Observed - model[k]) / (model[k] * Math.Sqrt(2.0 / (Data.Delays[k / 2].Shots - 1))))];
    }

    /// <inheritdoc/>
    public Scenario? Fitted(double[] x) => _model.Apply(Local(x));
}

/// <summary>
/// A ring-down with the exact likelihood of <see cref="RingdownAnalysis.Minus2LogLikelihood"/>: the joint vector gives the
/// linewidth γ/2π (Hz) and the initial value and floor (E₀, E_th; for amplitudes A₀², A_th², in the data's units squared).
/// </summary>
public sealed class RingdownTerm : IJointTerm
{
    private readonly Func<double[], double> _minus2LogL;
    private readonly double _saturated;

    /// <summary>The keys of a ring-down's parameters in a fit file: linewidth (Hz), initial and floor (data units; squared for amplitudes).</summary>
    public static readonly ImmutableArray<string> Keys = ["linewidth", "initial", "floor"];

    /// <summary>A term of <paramref name="data"/>; <paramref name="indices"/> are the joint indices of linewidth, initial and floor.</summary>
    public RingdownTerm(string name, RingdownData data, int[] indices)
    {
        Name = name;
        Data = data;
        Indices = [.. indices];
        _minus2LogL = RingdownAnalysis.Minus2LogLikelihood(data);
        _saturated = RingdownAnalysis.SaturatedMinus2LogLikelihood(data);
        string quantity = data.Kind == RingdownKind.Energy ? "energy" : "amplitude";
        Points = [.. data.TimesS.Select((t, i) => new JointPoint(quantity, t, data.Values[i], data.Sigmas?[i]))];
    }

    /// <summary>The data.</summary>
    public RingdownData Data { get; }

    /// <summary>Joint indices of linewidth, initial, floor.</summary>
    public ImmutableArray<int> Indices { get; }

    /// <inheritdoc/>
    public string Name { get; }
    /// <inheritdoc/>
    public string Kind => "ringdown";
    /// <inheritdoc/>
    public string Source => Data.Source;
    /// <inheritdoc/>
    public (string Name, string Unit) Axis => ("time", "s");
    /// <inheritdoc/>
    public string ValueUnit => "data units";
    /// <inheritdoc/>
    public ImmutableArray<(string Key, int Index)> Uses => [.. Keys.Select((k, i) => (k, Indices[i]))];
    /// <inheritdoc/>
    public int Statistics => Data.TimesS.Length;
    /// <inheritdoc/>
    public bool Absolute => Data.Kind == RingdownKind.Amplitude && Data.Sigmas is not null;
    /// <inheritdoc/>
    public string Likelihood => Data.Kind == RingdownKind.Energy
        ? "exponential: each energy thermally distributed about E0·exp(−γ(t − t0)) + E_th"
        : Data.Sigmas is null ? "gaussian: amplitudes with a common unknown σ, profiled out (N ln(RSS/N))" : "gaussian: amplitudes with the stated σ";
    /// <inheritdoc/>
    public ImmutableArray<JointPoint> Points { get; }

    // The ring-down's own parameter order: initial, decay rate γ = 2π·linewidth (s⁻¹), floor.
    private double[] Local(double[] x) => [x[Indices[1]], 2 * Math.PI * x[Indices[0]], x[Indices[2]]];

    /// <inheritdoc/>
    public double Deviance(double[] x, CancellationToken cancel) => _minus2LogL(Local(x)) - _saturated;

    /// <inheritdoc/>
    public double[] Model(double[] x, CancellationToken cancel) => RingdownAnalysis.Model(Data, Local(x));

    /// <inheritdoc/>
    public double[] Residuals(double[] model)
    {
        // As the ring-down reports them: (E − m)/m has unit variance for an exponential; amplitudes by their σ (or the rms residual).
        var y = Data.Values;
        if (Data.Kind == RingdownKind.Energy) return [.. y.Select((v, i) => (v - model[i]) / model[i])];
        if (Data.Sigmas is { } sigma) return [.. y.Select((v, i) => (v - model[i]) / sigma[i])];
        double rms = Math.Sqrt(y.Select((v, i) => (v - model[i]) * (v - model[i])).Sum() / Math.Max(1, y.Length - 3));
        return [.. y.Select((v, i) => (v - model[i]) / rms)];
    }

    /// <inheritdoc/>
    public Scenario? Fitted(double[] x) => null;
}

/// <summary>
/// Steady occupancies against a red tone's cooperativity, modelled by <see cref="CoolingAnalysis.HeatedOccupancy"/> (the
/// scenario's model with the cavity heated by a·C^b): Gaussian with the stated errors, or least squares with σ profiled out.
/// </summary>
public sealed class CoolingTerm : IJointTerm
{
    private readonly int _stage, _tone;
    private readonly CoolingSettings _settings = new();

    /// <summary>The keys of the heating law in a fit file, besides the scenario's paths.</summary>
    public static readonly ImmutableArray<string> HeatingKeys = ["heating.coefficient", "heating.exponent"];

    /// <summary>A term of <paramref name="data"/> under <paramref name="scenario"/>; <paramref name="heating"/> are the joint indices of a and b.</summary>
    public CoolingTerm(string name, string source, Scenario scenario, int stage, int tone, ImmutableArray<CoolingPoint> data,
        ImmutableArray<(ParameterPath Path, int Index)> paths, int[] heating)
    {
        Name = name;
        Source = source;
        Scenario = scenario;
        (_stage, _tone) = (stage, tone);
        Data = data;
        Paths = paths;
        Heating = [.. heating];
        Points = [.. data.Select(p => new JointPoint("occupancy", p.Cooperativity, p.Occupancy, p.Error))];
    }

    /// <summary>The scenario before the joint parameters are set.</summary>
    public Scenario Scenario { get; }

    /// <summary>The measured points.</summary>
    public ImmutableArray<CoolingPoint> Data { get; }

    /// <summary>The scenario paths set from the joint vector.</summary>
    public ImmutableArray<(ParameterPath Path, int Index)> Paths { get; }

    /// <summary>Joint indices of the heating coefficient and exponent.</summary>
    public ImmutableArray<int> Heating { get; }

    private bool Errors => Data.All(p => p.Error is > 0);

    /// <inheritdoc/>
    public string Name { get; }
    /// <inheritdoc/>
    public string Kind => "cooling";
    /// <inheritdoc/>
    public string Source { get; }
    /// <inheritdoc/>
    public (string Name, string Unit) Axis => ("cooperativity", "");
    /// <inheritdoc/>
    public string ValueUnit => "quanta";
    /// <inheritdoc/>
    public ImmutableArray<(string Key, int Index)> Uses => [.. Paths.Select(p => (p.Path.Text, p.Index)), .. HeatingKeys.Select((k, i) => (k, Heating[i]))];
    /// <inheritdoc/>
    public int Statistics => Data.Length;
    /// <inheritdoc/>
    public bool Absolute => Errors;
    /// <inheritdoc/>
    public string Likelihood => Errors ? "gaussian: occupancy with the stated errors" : "gaussian: occupancies with a common unknown σ, profiled out (N ln(RSS/N))";
    /// <inheritdoc/>
    public ImmutableArray<JointPoint> Points { get; }

    /// <inheritdoc/>
    public Scenario? Fitted(double[] x) => JointTerm.Set(Scenario, Paths, x);

    /// <inheritdoc/>
    public double[] Model(double[] x, CancellationToken cancel)
    {
        var s = Fitted(x)!;
        double a = x[Heating[0]], b = x[Heating[1]];
        var model = new double[Data.Length];
        for (int i = 0; i < model.Length; i++)
        {
            cancel.ThrowIfCancellationRequested();
            model[i] = CoolingAnalysis.HeatedOccupancy(s, _stage, _tone, Data[i].Cooperativity, a, b, _settings);
        }
        return model;
    }

    /// <inheritdoc/>
    public double Deviance(double[] x, CancellationToken cancel)
    {
        var model = Model(x, cancel);
        double sum = 0;
        if (Errors)
        {
            for (int i = 0; i < model.Length; i++) sum += global::Decohere.Statistics.Deviance.Gaussian(Data[i].Occupancy, model[i], Data[i].Error!.Value);
            return sum;
        }
        // Least squares with σ profiled out, as the cooling analysis's heating fit (−2 ln L = N ln(RSS/N) + const).
        for (int i = 0; i < model.Length; i++) sum += (Data[i].Occupancy - model[i]) * (Data[i].Occupancy - model[i]);
        return model.Length * Math.Log(sum / model.Length);
    }

    /// <inheritdoc/>
    public double[] Residuals(double[] model)
    {
        if (Errors) return [.. Data.Select((p, i) => (p.Occupancy - model[i]) / p.Error!.Value)];
        double rms = Math.Sqrt(Data.Select((p, i) => (p.Occupancy - model[i]) * (p.Occupancy - model[i])).Sum() / Math.Max(1, Data.Length - 2));
        return [.. Data.Select((p, i) => (p.Occupancy - model[i]) / rms)];
    }
}

/// <summary>
/// Measured sideband asymmetries ξ = (P₋/Γ₋)/(P₊/Γ₊) of a stage's red and blue probes, modelled exactly by
/// <see cref="SpectrumAnalysis.AsymmetryRatio"/> (each probe alone, its cavity's bath and back-action included, so a hot
/// cavity's bias is part of the model), Gaussian in the stated errors. A point with a probe coupling sets both tones to it.
/// </summary>
public sealed class SidebandTerm : IJointTerm
{
    private readonly int _stage, _red, _blue;
    private readonly ParameterPath? _redCoupling, _blueCoupling;

    /// <summary>A term of <paramref name="data"/> under <paramref name="scenario"/>'s stage and red and blue tones <paramref name="pair"/>.</summary>
    public SidebandTerm(string name, string source, Scenario scenario, (int Stage, int Red, int Blue) pair, ImmutableArray<SidebandRatioPoint> data,
        ImmutableArray<(ParameterPath Path, int Index)> paths)
    {
        Name = name;
        Source = source;
        Scenario = scenario;
        (_stage, _red, _blue) = pair;
        Data = data;
        Paths = paths;
        if (data.Any(p => p.CouplingHz is not null))
        {
            string stage = scenario.Stages[_stage].Name;
            _redCoupling = ParameterPath.Parse($"stages.{stage}.tones[{_red}].coupling", scenario);
            _blueCoupling = ParameterPath.Parse($"stages.{stage}.tones[{_blue}].coupling", scenario);
        }
        Points = [.. data.Select((p, i) => new JointPoint("sideband_ratio", p.CouplingHz ?? i, p.Ratio, p.Error))];
    }

    /// <summary>The scenario before the joint parameters are set.</summary>
    public Scenario Scenario { get; }

    /// <summary>The measured points.</summary>
    public ImmutableArray<SidebandRatioPoint> Data { get; }

    /// <summary>The scenario paths set from the joint vector.</summary>
    public ImmutableArray<(ParameterPath Path, int Index)> Paths { get; }

    /// <inheritdoc/>
    public string Name { get; }
    /// <inheritdoc/>
    public string Kind => "sidebands";
    /// <inheritdoc/>
    public string Source { get; }
    /// <inheritdoc/>
    public (string Name, string Unit) Axis => _redCoupling is null ? ("point", "") : ("probe coupling", "Hz");
    /// <inheritdoc/>
    public string ValueUnit => "";
    /// <inheritdoc/>
    public ImmutableArray<(string Key, int Index)> Uses => [.. Paths.Select(p => (p.Path.Text, p.Index))];
    /// <inheritdoc/>
    public int Statistics => Data.Length;
    /// <inheritdoc/>
    public bool Absolute => true;
    /// <inheritdoc/>
    public string Likelihood => "gaussian: sideband asymmetry with the stated errors";
    /// <inheritdoc/>
    public ImmutableArray<JointPoint> Points { get; }

    /// <inheritdoc/>
    public Scenario? Fitted(double[] x) => JointTerm.Set(Scenario, Paths, x);

    /// <inheritdoc/>
    public double[] Model(double[] x, CancellationToken cancel)
    {
        var s = Fitted(x)!;
        var model = new double[Data.Length];
        for (int i = 0; i < model.Length; i++)
        {
            cancel.ThrowIfCancellationRequested();
            var at = Data[i].CouplingHz is { } g ? _blueCoupling!.Set(_redCoupling!.Set(s, g), g) : s;
            model[i] = SpectrumAnalysis.AsymmetryRatio(at, _stage, _red, _blue);
        }
        return model;
    }

    /// <inheritdoc/>
    public double Deviance(double[] x, CancellationToken cancel)
    {
        double[] model;
        try
        {
            model = Model(x, cancel);
        }
        catch (UnstableDynamicsException)
        {
            // A trial point where a probe alone amplifies has no stationary sideband: impossible, not an error.
            return double.PositiveInfinity;
        }
        double sum = 0;
        for (int i = 0; i < model.Length; i++) sum += global::Decohere.Statistics.Deviance.Gaussian(Data[i].Ratio, model[i], Data[i].Error);
        return sum;
    }

    /// <inheritdoc/>
    public double[] Residuals(double[] model) => [.. Data.Select((p, i) => (p.Ratio - model[i]) / p.Error)];
}

using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting;

/// <summary>Settings of a scenario fit.</summary>
public sealed record FitSettings
{
    /// <summary>Parameter paths to fit (empty: the readout mode's bath occupancy and linewidth, plus the added noise for shots or variances).</summary>
    public ImmutableArray<string> Free { get; init; } = [];

    /// <summary>Priors on parameters (their paths are freed if not listed in <see cref="Free"/>).</summary>
    public ImmutableArray<FitPrior> Priors { get; init; } = [];

    /// <summary>
    /// Parameters held fixed at a value known only to ± sd (Gaussian <see cref="FitPrior"/>s, not freed): the fit sets them and
    /// reports, for each, how far a 1σ error in it moves every estimate.
    /// </summary>
    public ImmutableArray<FitPrior> Fixed { get; init; } = [];

    /// <summary>A readout calibration: data in measured units, converted to quanta with the gain's uncertainty carried.</summary>
    public FitCalibration? Calibration { get; init; }

    /// <summary>Optimiser starts.</summary>
    public int Starts { get; init; } = 4;

    /// <summary>Confidence of every interval.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Compute profile-likelihood intervals.</summary>
    public bool Profiles { get; init; } = true;

    /// <summary>Profile only these paths (null: all free parameters).</summary>
    public IReadOnlyCollection<string>? ProfileOnly { get; init; }

    /// <summary>Use both cores for starts and profiles.</summary>
    public bool Parallel { get; init; } = true;

    /// <summary>|correlation| above which two parameters are reported as not separately identified.</summary>
    public double CorrelationLimit { get; init; } = 0.95;

    /// <summary>Points of the fitted curve written for the plot.</summary>
    public int CurvePoints { get; init; } = 161;

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (Starts < 1) throw new InputException($"starts: {Starts}: must be ≥ 1");
        if (!(Confidence > 0 && Confidence < 1)) throw new InputException($"confidence: {Confidence} is out of range; allowed 0 < C < 1 (e.g. 0.95)");
        if (CurvePoints < 2) throw new InputException($"curve points: {CurvePoints}: must be ≥ 2");
    }
}

/// <summary>A combination of two parameters that the data do determine when the two are not separately identified.</summary>
public sealed record IdentifiedCombination(string Name, string Expression, string First, string Second, double Correlation, FittedQuantity FittedQuantity);

/// <summary>Data and model at one delay: the model's prediction and its pointwise standard deviation from the parameter covariance.</summary>
public sealed record DelayFit(DelayObservation Data, ReadoutPrediction Model, ReadoutPrediction ModelSd);

/// <summary>
/// A parameter held fixed at <paramref name="Value"/> ± <paramref name="Sd"/> (SI units) and the shift of each fitted parameter
/// (in the order of <see cref="FitResult.Parameters"/>, their SI units) when the fixed value is raised by one standard deviation.
/// </summary>
public sealed record FixedParameterBias(string Path, double Value, double Sd, ImmutableArray<double> ShiftPerSd);

/// <summary>The fitted curve on a fine delay grid, for plots.</summary>
public sealed record FitCurve(ImmutableArray<double> DelaysS, ImmutableArray<ReadoutPrediction> Model, ImmutableArray<ReadoutPrediction> ModelSd);

/// <summary>Everything a scenario fit produced.</summary>
public sealed record FitResult(
    Scenario Scenario,
    Scenario Fitted,
    IReadoutChain Readout,
    FitData Data,
    ImmutableArray<ParameterPath> Paths,
    ImmutableArray<FittedQuantity> Parameters,
    ImmutableArray<FittedQuantity> Derived,
    ImmutableArray<IdentifiedCombination> Combinations,
    double[,] Correlation,
    GoodnessOfFit Goodness,
    ImmutableArray<DelayFit> Delays,
    FitCurve Curve,
    ImmutableArray<string> Warnings,
    string Likelihood,
    double Confidence,
    int Evaluations,
    double ElapsedSeconds) : IAnalysisResult
{
    /// <summary>The priors the likelihood included (those given, and a calibration's added noise).</summary>
    public ImmutableArray<FitPrior> Priors { get; init; } = [];

    /// <summary>The parameters held fixed with a stated uncertainty, and the bias each can cause.</summary>
    public ImmutableArray<FixedParameterBias> FixedBiases { get; init; } = [];

    /// <summary>The noise calibration the data were converted with, if any.</summary>
    public FitCalibration? Calibration { get; init; }

    /// <inheritdoc/>
    public Provenance Provenance { get; } = Provenance.For(Scenario);

    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);

    /// <inheritdoc/>
    public WorkStatistics Work => new(TimeSpan.FromSeconds(ElapsedSeconds), Evaluations);
}

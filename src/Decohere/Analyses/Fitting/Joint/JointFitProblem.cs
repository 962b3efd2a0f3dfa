using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting.Joint;

/// <summary>One entry of the joint parameter vector.</summary>
/// <param name="Name">Its name in the fit file (or <c>DATASET.key</c> for a data set's own nuisance parameter).</param>
/// <param name="Dimension">Its dimension; the value is in SI units (Hz, K, s) or a plain number.</param>
/// <param name="Start">The optimiser's start (SI units).</param>
/// <param name="Domain">Where it may lie (the strictest of the settings it goes into).</param>
/// <param name="Prior">A prior stated in the fit file, or null.</param>
/// <param name="DataSets">The data sets that read it: shared when more than one.</param>
/// <param name="Targets">What it is set into, as <c>DATASET: key</c>.</param>
public sealed record JointParameter(string Name, Dimension Dimension, double Start, ParameterDomain Domain, FitPrior? Prior,
    ImmutableArray<string> DataSets, ImmutableArray<string> Targets)
{
    /// <summary>True when several data sets read it.</summary>
    public bool Shared => DataSets.Length > 1;

    /// <summary>The SI unit of the value ("" for a plain number).</summary>
    public string Unit => Quantity.SiUnit(Dimension);
}

/// <summary>A noise calibration a delay data set was converted with: its gain's uncertainty is carried by refits at gain ± σ.</summary>
/// <param name="Term">Index of the data set's term.</param>
/// <param name="Calibration">The calibration (gain, added noise, their errors).</param>
/// <param name="Raw">The data in measured units, before division by the gain.</param>
public sealed record JointCalibration(int Term, FitCalibration Calibration, FitData Raw);

/// <summary>
/// A validated joint fit: the parameter vector, one likelihood term per data set, and the priors (stated in the file, or
/// from a calibration's added noise). The problem holds only the mathematics; <see cref="JointFitAnalysis"/> solves it.
/// </summary>
/// <param name="Name">The fit's name (the file's stem unless stated).</param>
/// <param name="Source">The fit file.</param>
/// <param name="Text">The fit file's text, for provenance.</param>
/// <param name="Parameters">The joint parameters, in file order then the data sets' own.</param>
/// <param name="Terms">The data sets, in file order.</param>
/// <param name="Priors">Every prior term of −2 ln L, by parameter index.</param>
/// <param name="Calibrations">The calibrated data sets.</param>
public sealed record JointFitProblem(string Name, string Source, string Text, ImmutableArray<JointParameter> Parameters,
    ImmutableArray<IJointTerm> Terms, ImmutableArray<(int Index, FitPrior Prior)> Priors, ImmutableArray<JointCalibration> Calibrations)
{
    /// <summary>The provenance of results of this problem: the fit file's name, text and SHA-256.</summary>
    public Provenance Provenance => new(Name, Scenarios.ScenarioLoader.Hash(Text), Text, 0, Provenance.Version);
}

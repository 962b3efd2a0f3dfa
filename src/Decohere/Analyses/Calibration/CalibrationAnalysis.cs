using MathNet.Numerics.Distributions;
using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Statistics;

namespace Decohere.Analyses.Calibration;

/// <summary>Settings of a noise calibration.</summary>
public sealed record CalibrationSettings
{
    /// <summary>Confidence of every interval.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Use both cores for starts and profiles.</summary>
    public bool Parallel { get; init; } = true;

    /// <summary>The readout a scenario predicts; when given, the calibration is compared with its added noise.</summary>
    public IReadoutChain? Expected { get; init; }

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (!(Confidence > 0 && Confidence < 1)) throw new InputException($"confidence: {Confidence} is out of range; allowed 0 < C < 1 (e.g. 0.95)");
    }
}

/// <summary>The added-noise calibration: gain and added noise with intervals, their correlation and the goodness of fit.</summary>
public sealed record CalibrationResult(
    string Source,
    ImmutableArray<CalibrationPoint> Points,
    FittedQuantity Gain,
    FittedQuantity AddedNoise,
    FittedQuantity AddedNoiseInputReferred,
    double Correlation,
    GoodnessOfFit Goodness,
    ImmutableArray<string> Warnings,
    double Confidence,
    IReadoutChain? Expected,
    WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public Provenance Provenance { get; } = Provenance.Standalone(Source);

    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);
}

/// <summary>
/// Added-noise calibration against known prepared occupancies n: each quadrature's measured variance is
/// σ² = g·(n + ½) + n_add, with g the gain (measured units per quantum) and n_add the additive noise in measured units
/// (the intercept at n + ½ = 0; n_add/g is the input-referred added noise in quanta). Fitted by maximum likelihood on the
/// exact χ² law of each sample variance, (N − 1)s²/σ² ~ χ²_{N−1} (NIST/SEMATECH e-Handbook of Statistical Methods,
/// sec. 7.2.3) — for a gamma response with identity link this is the weighted least squares that iterates the weights
/// (N − 1)/(2σ⁴) to convergence (P. McCullagh, J. A. Nelder, Generalized Linear Models, 2nd ed., 1989, sec. 2.5, 8.3).
/// </summary>
public static class CalibrationAnalysis
{
    /// <summary>Fits gain and added noise to the points read from <paramref name="source"/> (named in messages).</summary>
    /// <exception cref="InputException">A setting is out of range, or fewer than two distinct occupancies.</exception>
    /// <exception cref="OperationCanceledException"><paramref name="cancel"/> was set (checked at every likelihood evaluation).</exception>
    public static CalibrationResult Solve(IReadOnlyList<CalibrationPoint> points, string source = "data", CalibrationSettings? settings = null,
        CancellationToken cancel = default)
    {
        settings ??= new CalibrationSettings();
        settings.Validate();
        long started = System.Diagnostics.Stopwatch.GetTimestamp();
        double confidence = settings.Confidence;
        bool parallel = settings.Parallel;
        if (points.Select(p => p.Occupancy).Distinct().Count() < 2)
            throw new InputException($"{source}: the calibration needs at least two different prepared occupancies to separate gain from added noise");
        // Start from ordinary least squares on the per-point mean variance.
        double[] xs = [.. points.Select(p => p.Occupancy + 0.5)];
        double[] ys = [.. points.Select(p => 0.5 * (p.VarI + p.VarQ))];
        double mx = xs.Average(), my = ys.Average();
        double slope = xs.Zip(ys).Sum(t => (t.First - mx) * (t.Second - my)) / xs.Sum(x => (x - mx) * (x - mx));
        double intercept = my - slope * mx;
        if (!(slope > 0)) slope = my / mx;
        if (!(intercept > 0)) intercept = 0.01 * my;
        double Deviance(double[] b)
        {
            double d = 0;
            foreach (var p in points)
            {
                double s2 = b[0] * (p.Occupancy + 0.5) + b[1];
                d += Statistics.Deviance.ChiSquare(p.Shots, p.VarI, s2) + Statistics.Deviance.ChiSquare(p.Shots, p.VarQ, s2);
            }
            return d;
        }
        var ml = MaximumLikelihood.Fit(Deviance,
            [new FitParameter("gain", slope, ParameterDomain.Positive), new FitParameter("added_noise", intercept, ParameterDomain.NonNegative)],
            new MaximumLikelihoodSettings { Confidence = confidence, Parallel = parallel, Starts = 2, Cancel = cancel });
        double z = Normal.InvCDF(0, 1, 0.5 + confidence / 2);
        FittedQuantity Of(int k, string name)
        {
            var iv = ml.Intervals[k]!;
            return new FittedQuantity(name, ml.Estimates[k], ml.StandardErrors[k], iv.Low, iv.High, iv.LowReached, iv.HighReached, "profile");
        }
        var gain = Of(0, "gain");
        var added = Of(1, "added_noise");
        // n_add/g by the delta method on ln(n_add) − ln(g).
        double ratio = ml.Estimates[1] / ml.Estimates[0];
        var cov = ml.InternalCovariance;
        double sdLog = cov is null ? double.NaN : Math.Sqrt(Math.Max(cov[0, 0] + cov[1, 1] - 2 * cov[0, 1], 0));
        var inputReferred = new FittedQuantity("added_noise_input_referred", ratio, ratio * sdLog, ratio * Math.Exp(-z * sdLog), ratio * Math.Exp(z * sdLog), true, true, "delta (log)");
        int dof = 2 * points.Count - 2;
        double pValue = dof > 0 ? 1 - ChiSquared.CDF(dof, ml.Minimum) : double.NaN;
        var warnings = new List<string>(ml.Warnings);
        if (dof > 0 && pValue < 1e-3)
            warnings.Add($"the linear model does not describe the calibration data well: deviance {ml.Minimum:G5} for {dof} degrees of freedom (p = {pValue:G2})");
        if (settings.Expected is { } expected && !(inputReferred.Low <= expected.AddedNoise && expected.AddedNoise <= inputReferred.High))
            warnings.Add($"the calibrated input-referred added noise {ratio:G4} quanta ({confidence:P0} interval {inputReferred.Low:G4} – {inputReferred.High:G4}) " +
                $"does not contain the scenario readout's {expected.AddedNoise:G4} quanta ({expected.Method}); check the readout chain's efficiencies and amplifier noise");
        return new CalibrationResult(source, [.. points], gain, added, inputReferred, ml.Correlation[0, 1],
            new GoodnessOfFit(ml.Minimum, dof, dof > 0 ? ml.Minimum / dof : double.NaN, pValue), [.. warnings], confidence, settings.Expected,
            WorkStatistics.Since(started, ml.Evaluations));
    }
}

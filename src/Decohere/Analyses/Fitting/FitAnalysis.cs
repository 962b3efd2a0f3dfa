using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using System.Diagnostics;
using System.Globalization;
using Decohere.Core;
using Decohere.Model.Readouts;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting;

/// <summary>
/// Fits free scenario parameters (named by <see cref="ParameterPath"/>) to measured data by maximum likelihood with the
/// engine as the model; reports standard errors, profile intervals, correlations, identified combinations, derived
/// physics (bath temperature, thermal decoherence rate, quality factor) and the goodness of fit.
/// </summary>
public static class FitAnalysis
{
    /// <summary>
    /// The default free parameters: the readout mode's bath occupancy and linewidth, plus a stated <c>readout.added_noise</c> when the
    /// data are variances or shots. A readout given by a chain or a pulse stays fixed unless its parameters are freed by name.
    /// </summary>
    public static IReadOnlyList<string> DefaultFree(Scenario scenario, DataShape shape)
    {
        var readout = scenario.Readout ?? throw new InputException($"scenario '{scenario.Name}' has no readout block");
        var list = new List<string> { $"modes.{readout.Mode}.bath.occupancy", $"modes.{readout.Mode}.linewidth" };
        if (shape != DataShape.Occupancies && scenario.Readout?.AddedNoise is not null) list.Add("readout.added_noise");
        return list;
    }

    /// <summary>Fits the settings' free parameters (default: <see cref="DefaultFree"/>) of <paramref name="scenario"/> to <paramref name="data"/>.</summary>
    /// <exception cref="InputException">A setting is out of range, or a free path is unknown, repeated, not continuous, or not seen by this kind of data.</exception>
    /// <param name="scenario">The scenario whose parameters are fitted.</param>
    /// <param name="settings">Free parameters, starts, profiles.</param>
    /// <param name="data">The measured data.</param>
    /// <param name="cancel">Stops the fit at its next model evaluation (and within one evaluation, between delays).</param>
    public static FitResult Solve(Scenario scenario, FitSettings settings, FitData data, CancellationToken cancel = default)
    {
        settings.Validate();
        if (settings.Calibration is { } calibration) return Calibrated(scenario, settings, data, calibration, cancel);
        if (!settings.Fixed.IsDefaultOrEmpty) return WithFixed(scenario, settings, data, cancel);
        var clock = Stopwatch.StartNew();
        var listed = settings.Free.IsDefaultOrEmpty ? DefaultFree(scenario, data.Shape) : settings.Free;
        var free = listed.Concat(settings.Priors.Select(q => q.Path).Where(q => !listed.Contains(q))).ToArray();
        var repeatedPrior = settings.Priors.GroupBy(q => q.Path).FirstOrDefault(g => g.Count() > 1);
        if (repeatedPrior is not null) throw new InputException($"prior: '{repeatedPrior.Key}' has two priors");
        if (free.Length == 0) throw new InputException("free parameters: at least one parameter path is needed, e.g. modes.drum.bath.occupancy");
        var paths = free.Select(f => ParameterPath.Parse(f, scenario)).ToImmutableArray();
        var repeated = paths.GroupBy(p => p.Text).FirstOrDefault(g => g.Count() > 1);
        if (repeated is not null) throw new InputException($"free parameters: '{repeated.Key}' is listed twice");
        foreach (var path in paths)
        {
            if (path.Text == "readout.shots") throw new InputException("free parameters: readout.shots is a count, not a continuous parameter; it cannot be fitted");
            if (path.Text.StartsWith("readout.", StringComparison.Ordinal) && data.Shape == DataShape.Occupancies)
                throw new InputException($"free parameters: {path.Text} does not enter occupancy data (occupancies are already noise-subtracted); fit it from shots or variances");
        }
        var model = new ReadoutModel(scenario, paths);
        var delays = data.Delays.Select(d => d.DelayS).ToArray();
        var priors = paths.Select(p => settings.Priors.FirstOrDefault(q => q.Path == p.Text)).ToArray();
        double Objective(double[] x)
        {
            double prior = 0;
            for (int k = 0; k < x.Length; k++) if (priors[k] is { } q) prior += q.Minus2LogPrior(x[k]);
            return double.IsFinite(prior) ? DataLikelihood.Total(data, model.Predict(x, delays, cancel)) + prior : double.PositiveInfinity;
        }

        var parameters = paths.Select((p, k) => new FitParameter(p.Text, Start(p, scenario, priors[k]),
            p.MustBePositive ? ParameterDomain.Positive : p.IsSigned ? ParameterDomain.Real : ParameterDomain.NonNegative)).ToArray();
        var ml = MaximumLikelihood.Fit(Objective, parameters, new MaximumLikelihoodSettings
        {
            Starts = settings.Starts,
            Confidence = settings.Confidence,
            Profiles = settings.Profiles,
            Parallel = settings.Parallel,
            Cancel = cancel,
            ProfileOnly = settings.ProfileOnly?.Select(name => Array.FindIndex(parameters, q => q.Name == name) is var i && i >= 0 ? i
                : throw new InputException($"profile: '{name}' is not a free parameter")).ToArray(),
        });

        var fitted = model.Apply(ml.Estimates);
        var warnings = new List<string>(ml.Warnings);
        double z = Normal.InvCDF(0, 1, 0.5 + settings.Confidence / 2);
        var estimates = parameters.Select((p, k) =>
        {
            var iv = ml.Intervals[k];
            double se = ml.StandardErrors[k];
            return iv is null
                ? new FittedQuantity(p.Name, ml.Estimates[k], se, ml.Estimates[k] - z * se, ml.Estimates[k] + z * se, true, true, "wald")
                : new FittedQuantity(p.Name, ml.Estimates[k], se, iv.Low, iv.High, iv.LowReached, iv.HighReached, "profile");
        }).ToImmutableArray();

        int p = parameters.Length;
        var correlation = new double[p, p];
        for (int i = 0; i < p; i++) for (int j = 0; j < p; j++) correlation[i, j] = ml.Correlation[i, j];

        var derived = Derived(scenario, model, ml, paths, z);
        var combinations = Combinations(scenario, model, ml, paths, z, settings.CorrelationLimit, warnings);
        if (ThermalRefit(scenario, data, model, ml, paths, delays, settings, combinations, warnings, cancel) is { } thermal)
        {
            combinations = [.. combinations.Where(c => c.Name != thermal.Name), thermal];
            derived = [.. derived.Select(d => d.Name == thermal.Name ? thermal.FittedQuantity : d)];
        }

        int dof = DataLikelihood.Terms(data) + settings.Priors.Count(q => q.IsGaussian) - p;
        double pValue = dof > 0 ? ChiSquared.CDF(dof, ml.Minimum) is var c ? 1 - c : double.NaN : double.NaN;
        var goodness = new GoodnessOfFit(ml.Minimum, dof, dof > 0 ? ml.Minimum / dof : double.NaN, pValue);
        if (dof > 0 && pValue < 1e-3)
            warnings.Add($"the model does not describe the data well: deviance {ml.Minimum:G5} for {dof} degrees of freedom (reduced χ² {goodness.ReducedChiSquare:G4}, p = {pValue:G2}); intervals assume the model is right");
        if (dof <= 0)
            warnings.Add($"{DataLikelihood.Terms(data)} statistics for {p} parameters: no degrees of freedom are left to test the fit");

        cancel.ThrowIfCancellationRequested();
        var (delayModel, delaySd) = Band(model, ml, delays, cancel);
        var delayFits = data.Delays.Select((d, k) => new DelayFit(d, delayModel[k], delaySd[k])).ToImmutableArray();
        double maxDelay = delays.Max();
        int points = Math.Max(2, settings.CurvePoints);
        var grid = Enumerable.Range(0, points).Select(k => maxDelay * k / (points - 1)).ToArray();
        var (curveModel, curveSd) = Band(model, ml, grid, cancel);

        return new FitResult(scenario, fitted, ReadoutChains.For(fitted), data, paths, estimates, derived, combinations, correlation, goodness, delayFits,
            new FitCurve([.. grid], [.. curveModel], [.. curveSd]), [.. warnings.Distinct()], DataLikelihood.Describe(data),
            settings.Confidence, ml.Evaluations, clock.Elapsed.TotalSeconds) { Priors = settings.Priors };
    }

    // See FitCalibration: data to quanta, the added noise as a prior, the gain's uncertainty by refits at gain ± σ.
    private static FitResult Calibrated(Scenario scenario, FitSettings settings, FitData data, FitCalibration calibration, CancellationToken cancel)
    {
        if (data.Shape == DataShape.Occupancies)
            throw new InputException("calibration: occupancy data are already in quanta; a calibration converts shots or variances");
        if (scenario.Readout is not { AddedNoise: not null })
            throw new InputException("calibration: the scenario's readout must state added_noise (phenomenological), which the calibration replaces");
        const string noisePath = "readout.added_noise";
        var priors = settings.Priors.Any(q => q.Path == noisePath) ? settings.Priors
            : settings.Priors.Add(new FitPrior(noisePath, calibration.AddedNoise, calibration.AddedNoiseSd, null, null));
        var inner = settings with { Calibration = null, Priors = priors };
        var result = Solve(scenario, inner, FitCalibration.ToQuanta(data, calibration.Gain), cancel);
        result = result with { Calibration = calibration };
        if (calibration.GainSd == 0) return result;
        var shifts = Shifts(result, inner, (result.Fitted, FitCalibration.ToQuanta(data, calibration.Gain + calibration.GainSd)),
            (result.Fitted, FitCalibration.ToQuanta(data, Math.Max(calibration.Gain - calibration.GainSd, 1e-3 * calibration.Gain))), cancel);
        double z = Normal.InvCDF(0, 1, 0.5 + settings.Confidence / 2);
        var widened = result.Parameters.Select((e, k) =>
        {
            double shift = Math.Abs(shifts[k]);
            double Widen(double half) => Math.Sqrt(half * half + z * z * shift * shift);
            return e with
            {
                StandardError = Math.Sqrt(e.StandardError * e.StandardError + shift * shift),
                Low = e.LowReached ? e.Value - Widen(e.Value - e.Low) : e.Low,
                High = e.HighReached ? e.Value + Widen(e.High - e.Value) : e.High,
                Method = e.Method + "+gain",
            };
        }).ToImmutableArray();
        return result with
        {
            Parameters = widened,
            Warnings = result.Warnings.Add($"calibration {calibration.Source}: data divided by gain {calibration.Gain:G5} ± {calibration.GainSd:G3}; " +
                $"added noise prior {calibration.AddedNoise:G4} ± {calibration.AddedNoiseSd:G3} quanta; the gain's uncertainty is added to every parameter's error (delta method, intervals marked +gain)"),
        };
    }

    /// <summary>
    /// Fits with the fixed parameters at their stated values, then refits with each raised and lowered by its σ: half the
    /// difference is the first-order bias a 1σ error in it causes (the propagation of a systematic error through a least-
    /// squares estimate, e.g. P. R. Bevington, D. K. Robinson, Data Reduction and Error Analysis, 3rd ed. (2003), sec. 3.2).
    /// </summary>
    private static FitResult WithFixed(Scenario scenario, FitSettings settings, FitData data, CancellationToken cancel)
    {
        var paths = settings.Fixed.Select(f => ParameterPath.Parse(f.Path, scenario)).ToArray();
        var named = settings.Free.Concat(settings.Priors.Select(q => q.Path)).ToHashSet();
        foreach (var (f, path) in settings.Fixed.Zip(paths))
        {
            if (!f.IsGaussian) throw new InputException($"fixed: {f.Path}: give its value and uncertainty as VALUE±SD, e.g. {f.Path}=10 Hz±0.5 Hz");
            if (named.Contains(path.Text)) throw new InputException($"fixed: {path.Text} is also free (or has a prior); a parameter is either fitted or fixed");
        }
        if (paths.GroupBy(p => p.Text).FirstOrDefault(g => g.Count() > 1) is { } twice) throw new InputException($"fixed: '{twice.Key}' is listed twice");
        var fixedTexts = paths.Select(p => p.Text).ToHashSet();
        var inner = settings with
        {
            Fixed = [],
            Free = settings.Free.IsDefaultOrEmpty ? [.. DefaultFree(scenario, data.Shape).Where(f => !fixedTexts.Contains(f))] : settings.Free,
        };
        if (inner.Free.IsDefaultOrEmpty && inner.Priors.IsDefaultOrEmpty)
            throw new InputException("free parameters: every default free parameter is fixed; free at least one, e.g. modes.drum.bath.occupancy");
        var at = scenario;
        for (int k = 0; k < paths.Length; k++) at = paths[k].Set(at, settings.Fixed[k].Mean!.Value);
        var result = Solve(at, inner, data, cancel);
        var biases = ImmutableArray.CreateBuilder<FixedParameterBias>();
        var warnings = result.Warnings.ToList();
        for (int k = 0; k < paths.Length; k++)
        {
            double value = settings.Fixed[k].Mean!.Value, sd = settings.Fixed[k].Sd!.Value;
            var shifts = Shifts(result, inner, (paths[k].Set(result.Fitted, value + sd), data), (paths[k].Set(result.Fitted, value - sd), data), cancel);
            biases.Add(new FixedParameterBias(paths[k].Text, value, sd, [.. shifts]));
            // A bias below a fifth of the statistical error changes the total error by less than 2%.
            var large = result.Parameters.Select((e, i) => (e, Shift: shifts[i])).Where(t => Math.Abs(t.Shift) >= 0.2 * t.e.StandardError).ToArray();
            if (large.Length == 0) continue;
            string unit = Quantity.SiUnit(paths[k].Dimension) is { Length: > 0 } u ? " " + u : "";
            warnings.Add($"{paths[k].Text} is fixed at {value:G4}{unit} ± {sd:G3}{unit}: a 1σ error in it shifts " +
                string.Join(", ", large.Select(t => $"{t.e.Name} by {(t.Shift < 0 ? "−" : "+")}{Math.Abs(t.Shift):G3} ({Math.Abs(t.Shift) / t.e.StandardError:G2} standard errors)")) +
                "; free it, or give it as a prior, to carry its uncertainty into the intervals");
        }
        return result with { FixedBiases = biases.ToImmutable(), Warnings = [.. warnings] };
    }

    /// <summary>
    /// Half the change of each estimate between refits of two perturbed problems, started from the optimum with one start and no
    /// profiles (only the shift is needed): the first-order shift per +1σ of what was perturbed.
    /// </summary>
    private static double[] Shifts(FitResult result, FitSettings settings, (Scenario Scenario, FitData Data) up, (Scenario Scenario, FitData Data) down, CancellationToken cancel)
    {
        var quick = settings with { Profiles = false, Starts = 1, Free = [.. result.Paths.Select(p => p.Text)], Fixed = [], Calibration = null };
        var a = Solve(up.Scenario, quick, up.Data, cancel).Parameters;
        var b = Solve(down.Scenario, quick, down.Data, cancel).Parameters;
        return [.. a.Select((e, k) => 0.5 * (e.Value - b[k].Value))];
    }

    private static double Start(ParameterPath path, Scenario scenario, FitPrior? prior = null)
    {
        // A start the prior forbids would leave the optimiser on an infinite plateau.
        if (prior is { IsGaussian: false } && prior.Minus2LogPrior(path.Get(scenario)) > 0)
            return prior.Low > 0 ? Math.Sqrt(prior.Low!.Value * prior.High!.Value) : 0.5 * (prior.Low!.Value + prior.High!.Value);
        double v = path.Get(scenario);
        if (v > 0 && double.IsFinite(v)) return v;
        return path.Dimension switch
        {
            Dimension.Temperature => 0.01,
            Dimension.Frequency => 1,
            Dimension.Time => 1e-3,
            _ => 0.1,
        };
    }

    /// <summary>Predictions at the optimum and their pointwise standard deviations (delta method with central differences in the optimiser's coordinates).</summary>
    private static (ReadoutPrediction[] Model, ReadoutPrediction[] Sd) Band(ReadoutModel model, MaximumLikelihoodResult ml, double[] delays, CancellationToken cancel)
    {
        var centre = model.Predict(ml.Estimates, delays, cancel);
        var sd = new ReadoutPrediction[delays.Length];
        var cov = ml.InternalCovariance;
        if (cov is null)
        {
            var nan = new ReadoutPrediction(double.NaN, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);
            Array.Fill(sd, nan);
            return (centre, sd);
        }
        int p = ml.Parameters.Count;
        var grads = new double[p][,];
        for (int k = 0; k < p; k++)
        {
            double h = Math.Clamp(0.05 * Math.Sqrt(cov[k, k]), 1e-7, 0.05);
            var up = (double[])ml.Internal.Clone();
            var down = (double[])ml.Internal.Clone();
            up[k] += h;
            down[k] -= h;
            var a = model.Predict(up.Select((u, i) => ml.Parameters[i].ToNatural(u)).ToArray(), delays, cancel);
            var b = model.Predict(down.Select((u, i) => ml.Parameters[i].ToNatural(u)).ToArray(), delays, cancel);
            grads[k] = new double[delays.Length, 6];
            for (int d = 0; d < delays.Length; d++)
            {
                var da = Components(a[d]);
                var db = Components(b[d]);
                for (int c = 0; c < 6; c++) grads[k][d, c] = (da[c] - db[c]) / (2 * h);
            }
        }
        for (int d = 0; d < delays.Length; d++)
        {
            var s = new double[6];
            for (int c = 0; c < 6; c++)
            {
                double v = 0;
                for (int i = 0; i < p; i++)
                    for (int j = 0; j < p; j++) v += grads[i][d, c] * cov[i, j] * grads[j][d, c];
                s[c] = Math.Sqrt(Math.Max(v, 0));
            }
            sd[d] = new ReadoutPrediction(s[0], s[1], s[2], s[3], s[4], s[5]);
        }
        return (centre, sd);
    }

    private static double[] Components(ReadoutPrediction r) => [r.VarI, r.VarQ, r.CovIQ, r.MeanI, r.MeanQ, r.Occupancy];

    /// <summary>A derived quantity of the fitted scenario, its gradient in the optimiser's coordinates, and which parameters it depends on.</summary>
    private static (double Value, double[] Gradient) Evaluate(Func<Scenario, double> quantity, ReadoutModel model, MaximumLikelihoodResult ml)
    {
        double Of(double[] u) => quantity(model.Apply(u.Select((v, i) => ml.Parameters[i].ToNatural(v)).ToArray()));
        double value = Of(ml.Internal);
        var gradient = new double[ml.Parameters.Count];
        for (int k = 0; k < gradient.Length; k++)
        {
            double h = 1e-5 * Math.Max(1, Math.Abs(ml.Internal[k]));
            var up = (double[])ml.Internal.Clone();
            var down = (double[])ml.Internal.Clone();
            up[k] += h;
            down[k] -= h;
            gradient[k] = (Of(up) - Of(down)) / (2 * h);
            if (Math.Abs(gradient[k]) < 1e-10 * Math.Abs(value)) gradient[k] = 0;
        }
        return (value, gradient);
    }

    /// <summary>
    /// An estimate of a derived quantity: a function of one profiled parameter maps that parameter's profile interval
    /// (profile intervals are invariant under monotone reparametrisation); otherwise the delta method on ln q.
    /// </summary>
    private static FittedQuantity? DerivedEstimate(string name, Func<Scenario, double> quantity, ReadoutModel model, MaximumLikelihoodResult ml, double z)
    {
        var (value, gradient) = Evaluate(quantity, model, ml);
        var depends = Enumerable.Range(0, gradient.Length).Where(k => gradient[k] != 0).ToArray();
        if (depends.Length == 0 || !double.IsFinite(value)) return null;
        var cov = ml.InternalCovariance;
        double se = double.NaN;
        if (cov is not null)
        {
            double v = 0;
            foreach (int i in depends) foreach (int j in depends) v += gradient[i] * cov[i, j] * gradient[j];
            se = Math.Sqrt(Math.Max(v, 0));
        }
        if (depends.Length == 1 && ml.Intervals[depends[0]] is { } iv)
        {
            int k = depends[0];
            var par = ml.Parameters[k];
            double At(double x)
            {
                if (x == 0 && par.Domain == ParameterDomain.Positive) x = 1e-300;
                if (double.IsPositiveInfinity(x)) return gradient[k] > 0 ? double.PositiveInfinity : 0;
                var values = (double[])ml.Estimates.Clone();
                values[k] = x;
                return quantity(model.Apply(values));
            }
            double a = At(iv.Low), b = At(iv.High);
            return gradient[k] > 0
                ? new FittedQuantity(name, value, se, a, b, iv.LowReached, iv.HighReached, "profile")
                : new FittedQuantity(name, value, se, b, a, iv.HighReached, iv.LowReached, "profile");
        }
        if (value > 0 && double.IsFinite(se))
        {
            double sdLog = se / value;
            return new FittedQuantity(name, value, se, value * Math.Exp(-z * sdLog), value * Math.Exp(z * sdLog), true, true, "delta (log)");
        }
        return new FittedQuantity(name, value, se, value - z * se, value + z * se, true, true, "delta");
    }

    private static ImmutableArray<FittedQuantity> Derived(Scenario scenario, ReadoutModel model, MaximumLikelihoodResult ml, ImmutableArray<ParameterPath> paths, double z)
    {
        var readout = scenario.Readout!;
        var mode = scenario.ModeNamed(readout.Mode);
        if (mode.Kind != ModeKind.Mechanical) return [];
        string m = mode.Name;
        var stage = scenario.Stages[scenario.StageIndex(readout.Stage)];
        bool Free(string path) => paths.Any(p => p.Text == path);
        // The bath the mode rethermalises to is the one of the readout stage (a stage override if it has one).
        double Occupancy(Scenario s) => s.BathOf(s.ModeNamed(m), s.Stages[s.StageIndex(readout.Stage)]).Occupancy;
        var quantities = new List<(string Name, Func<Scenario, double> Quantity, bool Skip)>
        {
            ("bath_occupancy", Occupancy, Free($"modes.{m}.bath.occupancy") && !stage.BathOverrides.ContainsKey(m)),
            ("bath_temperature_k", s => Physics.Temperature(s.ModeNamed(m).FrequencyHz, Occupancy(s)), Free($"modes.{m}.bath.temperature") && !stage.BathOverrides.ContainsKey(m)),
            ("thermal_decoherence_rate_per_s", s => Physics.ThermalDecoherenceRate(s.ModeNamed(m).DecayRate, Occupancy(s)), false),
            ("quality_factor", s => s.ModeNamed(m).QualityFactor, Free($"modes.{m}.quality_factor")),
            ("linewidth_hz", s => s.ModeNamed(m).LinewidthHz, Free($"modes.{m}.linewidth")),
            ("energy_decay_time_s", s => 1 / s.ModeNamed(m).DecayRate, false),
        };
        var list = ImmutableArray.CreateBuilder<FittedQuantity>();
        foreach (var (name, quantity, skip) in quantities)
            if (!skip && DerivedEstimate(name, quantity, model, ml, z) is { } e) list.Add(e);
        return list.ToImmutable();
    }

    private static ImmutableArray<IdentifiedCombination> Combinations(Scenario scenario, ReadoutModel model, MaximumLikelihoodResult ml,
        ImmutableArray<ParameterPath> paths, double z, double limit, List<string> warnings)
    {
        var cov = ml.InternalCovariance;
        var list = ImmutableArray.CreateBuilder<IdentifiedCombination>();
        if (cov is null) return list.ToImmutable();
        int p = paths.Length;
        for (int i = 0; i < p; i++)
            for (int j = i + 1; j < p; j++)
            {
                double r = ml.Correlation[i, j];
                if (!(Math.Abs(r) > limit)) continue;
                var a = ml.Parameters[i];
                var b = ml.Parameters[j];
                // The best-determined direction w·u of the pair is the eigenvector of its 2×2 covariance with the
                // smallest eigenvalue; with u = ln x it is the power law x_i · x_j^e, e = w_j / w_i.
                var block = Matrix<double>.Build.DenseOfArray(new[,] { { cov[i, i], cov[i, j] }, { cov[j, i], cov[j, j] } });
                var evd = block.Evd(Symmetricity.Symmetric);
                int small = evd.EigenValues[0].Real <= evd.EigenValues[1].Real ? 0 : 1;
                var w = evd.EigenVectors.Column(small);
                double e = Math.Abs(w[0]) > 1e-12 ? w[1] / w[0] : double.PositiveInfinity;
                if (!double.IsFinite(e) || !a.IsLogarithmic || !b.IsLogarithmic)
                {
                    warnings.Add($"{a.Name} and {b.Name} are not separately identified by these data (correlation {r:F3})");
                    continue;
                }
                double rounded = Math.Abs(e - Math.Round(e)) < 0.25 && Math.Round(e) != 0 ? Math.Round(e) : Math.Round(e, 2);
                var thermal = ThermalPair(paths[i], paths[j], scenario);
                string name, expression;
                Func<Scenario, double> quantity;
                if (thermal is { } mode && Math.Abs(rounded - (IsQualityFactor(paths[i]) || IsQualityFactor(paths[j]) ? -1 : 1)) < 0.5)
                {
                    var readoutStage = scenario.Readout!.Stage;
                    name = "thermal_decoherence_rate_per_s";
                    expression = "Γ_th = γ·n_th";
                    quantity = s => Physics.ThermalDecoherenceRate(s.ModeNamed(mode).DecayRate, s.BathOf(s.ModeNamed(mode), s.Stages[s.StageIndex(readoutStage)]).Occupancy);
                }
                else
                {
                    string exponent = rounded == 1 ? "" : rounded == -1 ? "" : "^" + rounded.ToString("G3", CultureInfo.InvariantCulture);
                    expression = rounded == -1 ? $"{a.Name} / {b.Name}" : $"{a.Name} · {b.Name}{exponent}";
                    name = expression;
                    int ii = i, jj = j;
                    double ee = rounded;
                    quantity = s => paths[ii].Get(s) * Math.Pow(paths[jj].Get(s), ee);
                }
                var estimate = DerivedEstimate(name, quantity, model, ml, z);
                if (estimate is null) continue;
                var combo = new IdentifiedCombination(name, expression, a.Name, b.Name, r, estimate);
                list.Add(combo);
                string unit = name == "thermal_decoherence_rate_per_s" ? " s⁻¹" : "";
                warnings.Add($"{a.Name} and {b.Name} are not separately identified by these data (correlation {r:F3}); " +
                    $"the data determine {expression} = {estimate.Value:G4}{unit} ({ml.Parameters.Count} free; {100 * (1 - 2 * (1 - Normal.CDF(0, 1, z))):F0}% interval {estimate.Low:G4} – {estimate.High:G4}{unit})" +
                    (thermal is not null ? "; delays comparable to the energy decay time 1/γ separate γ from n_th" : ""));
            }
        return list.ToImmutable();
    }

    /// <summary>
    /// When the damping and the bath of the readout mode are both free but not separately determined (|ρ| above the
    /// limit, no positive-definite information, or an unbounded profile), refits with the bath replaced by the thermal
    /// decoherence rate Γ_th = γ·n_th and profiles Γ_th: its profile-likelihood interval holds even along a flat ridge of
    /// the (γ, n_th) likelihood, where the delta method has nothing to work with.
    /// </summary>
    private static IdentifiedCombination? ThermalRefit(Scenario scenario, FitData data, ReadoutModel model, MaximumLikelihoodResult ml,
        ImmutableArray<ParameterPath> paths, double[] delays, FitSettings settings, ImmutableArray<IdentifiedCombination> found, List<string> warnings,
        CancellationToken cancel)
    {
        if (!settings.Profiles) return null;
        string m = scenario.Readout!.Mode;
        int damping = paths.IndexOf(paths.FirstOrDefault(p => p.Text is var t && (t == $"modes.{m}.linewidth" || t == $"modes.{m}.quality_factor"))!);
        int bath = paths.IndexOf(paths.FirstOrDefault(p => p.Text is var t && (t == $"modes.{m}.bath.occupancy" || t == $"modes.{m}.bath.temperature"))!);
        if (damping < 0 || bath < 0) return null;
        bool correlated = ml.InternalCovariance is null || Math.Abs(ml.Correlation[damping, bath]) > settings.CorrelationLimit;
        bool flat = ml.Intervals[damping] is { } a && (!a.HighReached || (!a.LowReached && a.Low == 0)) ||
                    ml.Intervals[bath] is { } b && (!b.HighReached || (!b.LowReached && b.Low == 0));
        if (!correlated && !flat) return null;
        bool temperature = paths[bath].Text.EndsWith(".temperature", StringComparison.Ordinal);
        double frequency = scenario.ModeNamed(m).FrequencyHz;
        // x' = x with the bath entry replaced by Γ_th; the bath value follows from Γ_th and the damping in x'.
        double[] ToOriginal(double[] x)
        {
            var values = (double[])x.Clone();
            values[bath] = temperature ? 1 : 1;
            double gamma = model.Apply(values).ModeNamed(m).DecayRate;
            double n = x[bath] / gamma;
            values[bath] = temperature ? Physics.Temperature(frequency, n) : n;
            return values;
        }
        double rate0 = Physics.ThermalDecoherenceRate(scenario.ModeNamed(m).DecayRate, model.Apply(ml.Estimates).ModeNamed(m).Bath.Occupancy);
        double gammaHat = model.Apply(ml.Estimates).ModeNamed(m).DecayRate;
        var fittedScenario = model.Apply(ml.Estimates);
        rate0 = Physics.ThermalDecoherenceRate(gammaHat, fittedScenario.BathOf(fittedScenario.ModeNamed(m), fittedScenario.Stages[fittedScenario.StageIndex(scenario.Readout.Stage)]).Occupancy);
        if (!(rate0 > 0) || !double.IsFinite(rate0)) return null;
        var parameters = ml.Parameters.Select((p, k) => k == bath
            ? new FitParameter("thermal_decoherence_rate_per_s", rate0, ParameterDomain.NonNegative)
            : p with { Start = ml.Estimates[k] }).ToArray();
        var refit = MaximumLikelihood.Fit(x => DataLikelihood.Total(data, model.Predict(ToOriginal(x), delays, cancel)), parameters, new MaximumLikelihoodSettings
        {
            Cancel = cancel,
            Starts = 1,
            Confidence = settings.Confidence,
            Parallel = settings.Parallel,
            ProfileOnly = [bath],
        });
        var iv = refit.Intervals[bath]!;
        var estimate = new FittedQuantity("thermal_decoherence_rate_per_s", refit.Estimates[bath], refit.StandardErrors[bath], iv.Low, iv.High, iv.LowReached, iv.HighReached, "profile");
        double r = ml.InternalCovariance is null ? double.NaN : ml.Correlation[damping, bath];
        warnings.RemoveAll(w => w.Contains("not separately identified") && w.Contains(paths[damping].Text) && w.Contains(paths[bath].Text));
        warnings.Insert(0, $"{paths[damping].Text} and {paths[bath].Text} are not separately identified by these data" +
            (double.IsFinite(r) ? $" (correlation {r:F3})" : " (flat likelihood along γ·n_th = const)") +
            $"; the data determine the thermal decoherence rate Γ_th = γ·n_th = {estimate.Value:G4} s⁻¹ " +
            $"({settings.Confidence:P0} profile interval {estimate.Low:G4} – {(iv.HighReached ? estimate.High.ToString("G4", CultureInfo.InvariantCulture) : "∞")} s⁻¹); " +
            $"delays comparable to the energy decay time 1/γ separate γ from n_th");
        return new IdentifiedCombination("thermal_decoherence_rate_per_s", "Γ_th = γ·n_th", paths[damping].Text, paths[bath].Text, r, estimate);
    }

    private static bool IsQualityFactor(ParameterPath p) => p.Text.EndsWith(".quality_factor", StringComparison.Ordinal);

    /// <summary>The mode name when the pair is (damping, bath) of one mode: linewidth or quality factor with bath occupancy or temperature.</summary>
    private static string? ThermalPair(ParameterPath a, ParameterPath b, Scenario scenario)
    {
        static (string Mode, string Field)? Split(string text)
        {
            var parts = text.Split('.');
            return parts.Length >= 3 && parts[0] == "modes" ? (parts[1], string.Join('.', parts.Skip(2))) : null;
        }
        if (Split(a.Text) is not { } x || Split(b.Text) is not { } y || x.Mode != y.Mode) return null;
        bool Damping(string f) => f is "linewidth" or "quality_factor";
        bool Bath(string f) => f is "bath.occupancy" or "bath.temperature";
        return (Damping(x.Field) && Bath(y.Field)) || (Bath(x.Field) && Damping(y.Field)) ? x.Mode : null;
    }
}

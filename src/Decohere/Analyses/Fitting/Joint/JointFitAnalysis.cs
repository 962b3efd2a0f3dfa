using System.Collections.Immutable;
using System.Diagnostics;
using MathNet.Numerics.Distributions;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Fitting.Joint;

/// <summary>Settings of a joint fit (a light settings object; the problem is the <see cref="JointFitProblem"/>).</summary>
public sealed record JointFitSettings
{
    /// <summary>Optimiser starts.</summary>
    public int Starts { get; init; } = 4;

    /// <summary>Whether to compute profile-likelihood intervals (else Wald intervals from the standard errors).</summary>
    public bool Profiles { get; init; } = true;

    /// <summary>Names of the parameters to profile; default every parameter.</summary>
    public ImmutableArray<string> ProfileOnly { get; init; } = [];

    /// <summary>Confidence of the intervals.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Run starts and profile sides in parallel.</summary>
    public bool Parallel { get; init; } = true;

    /// <summary>|correlation| above which two parameters are reported as not separately identified.</summary>
    public double CorrelationLimit { get; init; } = 0.95;

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (Starts is < 1 or > 1000) throw new InputException($"starts: {Starts} is out of range; allowed 1 to 1000");
        if (!(Confidence > 0.5 && Confidence < 1)) throw new InputException($"confidence: {Confidence} is out of range; allowed 0.5 < C < 1");
        if (!(CorrelationLimit > 0 && CorrelationLimit < 1)) throw new InputException($"correlation limit: {CorrelationLimit} is out of range; allowed 0 to 1");
    }
}

/// <summary>A fitted joint parameter.</summary>
public sealed record JointEstimate(JointParameter Parameter, FittedQuantity Estimate);

/// <summary>A quantity that follows from one joint parameter (a bath temperature from a bath occupancy), with its interval mapped from the parameter's.</summary>
/// <param name="Name">The quantity (<c>bath_temperature_k</c>).</param>
/// <param name="Parameter">The joint parameter it follows from.</param>
/// <param name="Mode">The mode it describes.</param>
/// <param name="Estimate">Value, standard error (delta method) and interval.</param>
public sealed record JointDerived(string Name, string Parameter, string Mode, FittedQuantity Estimate);

/// <summary>One data set at the joint optimum: its points with model, band and residuals, its own deviance and goodness of fit.</summary>
/// <param name="Name">The data set's name.</param>
/// <param name="Kind">delays, ringdown or cooling.</param>
/// <param name="Source">The data file.</param>
/// <param name="Likelihood">The likelihood used.</param>
/// <param name="Axis">Abscissa name and unit.</param>
/// <param name="ValueUnit">Unit of the values.</param>
/// <param name="Points">The measured points.</param>
/// <param name="Model">The model at each point.</param>
/// <param name="ModelSd">Its standard deviation from the parameters' covariance (delta method); NaN without one.</param>
/// <param name="Residuals">Standardised residuals; NaN where the law has none.</param>
/// <param name="Deviance">The data set's share of −2 ln L at the joint optimum (a deviance when <paramref name="Absolute"/>).</param>
/// <param name="Statistics">Independent statistics it sums.</param>
/// <param name="DegreesOfFreedom">Statistics less the parameters it uses, a shared parameter counting 1/(data sets sharing it).</param>
/// <param name="PValue">P(χ²_dof ≥ deviance), null when the deviance is not absolute or no degrees of freedom are left.</param>
/// <param name="Absolute">True when the deviance is a goodness-of-fit statistic.</param>
/// <param name="Uses">Each setting of the data set and the parameter it takes.</param>
/// <param name="Fitted">The data set's scenario at the optimum, or null for a ring-down.</param>
public sealed record JointDataSetFit(string Name, string Kind, string Source, string Likelihood, (string Name, string Unit) Axis, string ValueUnit,
    ImmutableArray<JointPoint> Points, ImmutableArray<double> Model, ImmutableArray<double> ModelSd, ImmutableArray<double> Residuals,
    double Deviance, int Statistics, double DegreesOfFreedom, double? PValue, bool Absolute,
    ImmutableArray<(string Key, string Parameter)> Uses, Scenario? Fitted);

/// <summary>A joint fit: every parameter with its interval, the correlations, each data set's fit and the total.</summary>
public sealed record JointFitResult(
    JointFitProblem Problem, JointFitSettings Settings, ImmutableArray<JointEstimate> Parameters, ImmutableArray<JointDerived> Derived, double[,] Correlation,
    ImmutableArray<JointDataSetFit> DataSets, GoodnessOfFit Goodness, Provenance Provenance, ImmutableArray<string> Warnings, WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);
}

/// <summary>
/// Fits several data sets at once: the joint −2 ln L is the sum of each data set's deviance (its own analysis's exact
/// likelihood) and the priors, maximised over the joint parameter vector by <see cref="MaximumLikelihood.Fit"/> with
/// profile-likelihood intervals (D. J. Venzon, S. H. Moolgavkar, Appl. Stat. 37, 87 (1988)). Independent data sets
/// multiply their likelihoods, so a parameter several of them share is fixed by all of them together.
/// </summary>
public static class JointFitAnalysis
{
    /// <summary>Solves the joint fit.</summary>
    /// <exception cref="InputException">A setting is out of range, or the likelihood is not finite at any start.</exception>
    public static JointFitResult Solve(JointFitProblem problem, JointFitSettings? settings = null, CancellationToken cancel = default)
    {
        long clock = Stopwatch.GetTimestamp();
        settings ??= new JointFitSettings();
        settings.Validate();
        var parameters = problem.Parameters.Select(p => new FitParameter(p.Name, p.Start, p.Domain)).ToArray();
        int[]? profileOnly = settings.ProfileOnly.IsDefaultOrEmpty ? null : [.. settings.ProfileOnly.Select(name =>
            Array.FindIndex(parameters, q => q.Name == name) is var i and >= 0 ? i : throw new InputException($"profile: '{name}' is not a joint parameter"))];
        var ml = Fit(problem.Terms, problem, parameters, settings, profileOnly, cancel);
        var x = ml.Estimates;
        var warnings = new List<string>(ml.Warnings);
        double z = Normal.InvCDF(0, 1, 0.5 + settings.Confidence / 2);
        var estimates = parameters.Select((p, k) => ml.Intervals[k] is { } iv
            ? new FittedQuantity(p.Name, x[k], ml.StandardErrors[k], iv.Low, iv.High, iv.LowReached, iv.HighReached, "profile")
            : new FittedQuantity(p.Name, x[k], ml.StandardErrors[k], x[k] - z * ml.StandardErrors[k], x[k] + z * ml.StandardErrors[k], true, true, "wald")).ToArray();
        Widen(problem, parameters, settings, estimates, ml, z, warnings, cancel);

        int n = parameters.Length;
        var correlation = new double[n, n];
        for (int i = 0; i < n; i++) for (int j = 0; j < n; j++) correlation[i, j] = ml.Correlation[i, j];
        for (int i = 0; i < n; i++)
            for (int j = i + 1; j < n; j++)
                if (Math.Abs(correlation[i, j]) > settings.CorrelationLimit)
                    warnings.Add($"{parameters[i].Name} and {parameters[j].Name} are not separately identified by these data (correlation {correlation[i, j]:F3}); " +
                        "a data set that depends on only one of them separates them");

        var sets = problem.Terms.Select(t => DataSet(t, problem, ml, settings, warnings, cancel)).ToImmutableArray();
        int gaussianPriors = problem.Priors.Count(p => p.Prior.IsGaussian);
        int dof = sets.Sum(s => s.Statistics) + gaussianPriors - n;
        bool absolute = sets.All(s => s.Absolute);
        double pValue = absolute && dof > 0 ? 1 - ChiSquared.CDF(dof, ml.Minimum) : double.NaN;
        var goodness = new GoodnessOfFit(ml.Minimum, dof, dof > 0 ? ml.Minimum / dof : double.NaN, pValue);
        if (dof <= 0) warnings.Add($"{sets.Sum(s => s.Statistics)} statistics for {n} parameters: no degrees of freedom are left to test the fit");
        return new JointFitResult(problem, settings, [.. problem.Parameters.Select((p, k) => new JointEstimate(p, estimates[k]))], Temperatures(problem, estimates),
            correlation, sets, goodness,
            problem.Provenance, [.. warnings.Distinct()], WorkStatistics.Since(clock, ml.Evaluations));
    }

    /// <summary>
    /// The bath temperature of each mechanical mode whose bath occupancy is a joint parameter: T = h f / (k_B ln(1 + 1/n)) (Bose–Einstein,
    /// CODATA 2018 constants) is increasing in n, so the occupancy's profile interval maps end to end (profile intervals are
    /// invariant under monotone reparametrisation); the standard error by the derivative.
    /// </summary>
    private static ImmutableArray<JointDerived> Temperatures(JointFitProblem problem, FittedQuantity[] estimates)
    {
        var paths = problem.Terms.SelectMany(t => t switch
        {
            DelayTerm d => d.Paths.Select(p => (d.Scenario, p.Path, p.Index)),
            CoolingTerm c => c.Paths.Select(p => (c.Scenario, p.Path, p.Index)),
            _ => [],
        });
        var list = new List<JointDerived>();
        foreach (var (scenario, path, index) in paths)
        {
            var parts = path.Text.Split('.');
            if (parts is not ["modes", var m, "bath", "occupancy"] || scenario.ModeNamed(m) is not { Kind: ModeKind.Mechanical } mode) continue;
            if (list.Any(d => d.Parameter == problem.Parameters[index].Name && d.Mode == m)) continue;
            var e = estimates[index];
            double T(double n) => double.IsPositiveInfinity(n) ? double.PositiveInfinity : Physics.Temperature(mode.FrequencyHz, n);
            double h = 1e-6 * Math.Max(e.Value, 1e-9);
            double slope = (T(e.Value + h) - T(Math.Max(e.Value - h, 0))) / (e.Value + h - Math.Max(e.Value - h, 0));
            list.Add(new JointDerived("bath_temperature_k", problem.Parameters[index].Name, m,
                e with { Name = "bath_temperature_k", Value = T(e.Value), StandardError = slope * e.StandardError, Low = T(e.Low), High = T(e.High) }));
        }
        return [.. list];
    }

    private static MaximumLikelihoodResult Fit(IReadOnlyList<IJointTerm> terms, JointFitProblem problem, FitParameter[] parameters, JointFitSettings settings,
        int[]? profileOnly, CancellationToken cancel)
    {
        double Objective(double[] x)
        {
            double total = 0;
            foreach (var (index, prior) in problem.Priors) total += prior.Minus2LogPrior(x[index]);
            if (!double.IsFinite(total)) return double.PositiveInfinity;
            foreach (var term in terms) total += term.Deviance(x, cancel);
            return total;
        }
        return MaximumLikelihood.Fit(Objective, parameters, new MaximumLikelihoodSettings
        {
            Starts = settings.Starts,
            Confidence = settings.Confidence,
            Profiles = settings.Profiles,
            ProfileOnly = profileOnly,
            Parallel = settings.Parallel,
            Cancel = cancel,
        });
    }

    /// <summary>
    /// Carries each calibration's gain uncertainty into every parameter by the delta method (JCGM 100:2008, Guide to the
    /// Expression of Uncertainty in Measurement, sec. 5.1), as <c>fit --calibration</c> does: refits from the optimum with the
    /// data converted at gain ± σ give ∂x/∂gain·σ, independent gains adding in quadrature.
    /// </summary>
    private static void Widen(JointFitProblem problem, FitParameter[] parameters, JointFitSettings settings, FittedQuantity[] estimates,
        MaximumLikelihoodResult ml, double z, List<string> warnings, CancellationToken cancel)
    {
        var shift2 = new double[parameters.Length];
        var quick = settings with { Profiles = false, Starts = 1 };
        var fromOptimum = parameters.Select((p, k) => p with { Start = ml.Estimates[k] }).ToArray();
        foreach (var c in problem.Calibrations.Where(c => c.Calibration.GainSd > 0))
        {
            double[] Refit(double gain)
            {
                var terms = problem.Terms.ToArray();
                terms[c.Term] = ((DelayTerm)terms[c.Term]).With(FitCalibration.ToQuanta(c.Raw, gain));
                return Fit(terms, problem, fromOptimum, quick, null, cancel).Estimates;
            }
            var cal = c.Calibration;
            var up = Refit(cal.Gain + cal.GainSd);
            var down = Refit(Math.Max(cal.Gain - cal.GainSd, 1e-3 * cal.Gain));
            for (int k = 0; k < shift2.Length; k++) shift2[k] += Math.Pow(0.5 * (up[k] - down[k]), 2);
            warnings.Add($"calibration {cal.Source} ({problem.Terms[c.Term].Name}): data divided by gain {cal.Gain:G5} ± {cal.GainSd:G3}; " +
                $"added noise prior {cal.AddedNoise:G4} ± {cal.AddedNoiseSd:G3} quanta unless the file states one; the gain's uncertainty is added to every parameter's error (delta method, intervals marked +gain)");
        }
        if (shift2.All(s => s == 0)) return;
        for (int k = 0; k < estimates.Length; k++)
        {
            var e = estimates[k];
            double Widened(double half) => Math.Sqrt(half * half + z * z * shift2[k]);
            estimates[k] = e with
            {
                StandardError = Math.Sqrt(e.StandardError * e.StandardError + shift2[k]),
                Low = e.LowReached ? e.Value - Widened(e.Value - e.Low) : e.Low,
                High = e.HighReached ? e.Value + Widened(e.High - e.Value) : e.High,
                Method = e.Method + "+gain",
            };
        }
    }

    private static JointDataSetFit DataSet(IJointTerm term, JointFitProblem problem, MaximumLikelihoodResult ml, JointFitSettings settings, List<string> warnings,
        CancellationToken cancel)
    {
        cancel.ThrowIfCancellationRequested();
        var x = ml.Estimates;
        var model = term.Model(x, cancel);
        double deviance = term.Deviance(x, cancel);
        var used = term.Uses.Select(u => u.Index).Distinct().ToArray();
        double dof = term.Statistics - used.Sum(i => 1.0 / problem.Parameters[i].DataSets.Length);
        double? p = term.Absolute && dof > 0 ? 1 - ChiSquared.CDF(dof, deviance) : null;
        if (p < 1e-3)
            warnings.Add($"data set '{term.Name}' is not described well by its model at the joint optimum: deviance {deviance:G5} for {dof:G4} degrees of freedom (p = {p:G2}); " +
                "check it alone, or whether a shared parameter differs between the data sets");
        return new JointDataSetFit(term.Name, term.Kind, term.Source, term.Likelihood, term.Axis, term.ValueUnit, term.Points, [.. model],
            [.. Band(term, ml, used, cancel)], [.. term.Residuals(model)], deviance, term.Statistics, dof, p, term.Absolute,
            [.. term.Uses.Select(u => (u.Key, problem.Parameters[u.Index].Name))], term.Fitted(x));
    }

    /// <summary>The model's pointwise standard deviation by the delta method, with central differences in the optimiser's coordinates.</summary>
    private static double[] Band(IJointTerm term, MaximumLikelihoodResult ml, int[] used, CancellationToken cancel)
    {
        var cov = ml.InternalCovariance;
        int points = term.Points.Length;
        if (cov is null) return [.. Enumerable.Repeat(double.NaN, points)];
        var gradients = new Dictionary<int, double[]>();
        foreach (int k in used)
        {
            double h = Math.Clamp(0.05 * Math.Sqrt(cov[k, k]), 1e-7, 0.05);
            double[] At(double step)
            {
                var u = (double[])ml.Internal.Clone();
                u[k] += step;
                return term.Model([.. u.Select((v, i) => ml.Parameters[i].ToNatural(v))], cancel);
            }
            var a = At(h);
            var b = At(-h);
            gradients[k] = [.. a.Select((v, i) => (v - b[i]) / (2 * h))];
        }
        var sd = new double[points];
        for (int d = 0; d < points; d++)
        {
            double v = 0;
            foreach (int i in used) foreach (int j in used) v += gradients[i][d] * cov[i, j] * gradients[j][d];
            sd[d] = Math.Sqrt(Math.Max(v, 0));
        }
        return sd;
    }
}

using System.Collections.Immutable;
using System.Diagnostics;
using MathNet.Numerics.Distributions;
using Decohere.Core;
using Decohere.Statistics;

namespace Decohere.Analyses.Ringdown;

/// <summary>What a ring-down records and the noise its points declare.</summary>
public enum RingdownKind
{
    /// <summary>Amplitude, with independent Gaussian noise of stated σ per point (or an unknown common σ).</summary>
    Amplitude,
    /// <summary>Energy (or any power), each point drawn from an exponential (thermal) distribution about its mean.</summary>
    Energy,
}

/// <summary>A measured ring-down.</summary>
/// <param name="Source">Where it came from (a file name), for messages and provenance.</param>
/// <param name="Kind">Amplitude or energy.</param>
/// <param name="TimesS">Times (s).</param>
/// <param name="Values">Amplitudes or energies, in any consistent unit.</param>
/// <param name="Sigmas">Amplitude noise σ per point; null for energy, or for an amplitude of unknown common σ.</param>
public sealed record RingdownData(string Source, RingdownKind Kind, ImmutableArray<double> TimesS, ImmutableArray<double> Values, ImmutableArray<double>? Sigmas);

/// <summary>Settings of a ring-down fit.</summary>
public sealed record RingdownSettings
{
    /// <summary>The resonator's frequency (Hz), for Q = 2πf/γ; null: no Q.</summary>
    public double? FrequencyHz { get; init; }

    /// <summary>Confidence of the profile-likelihood intervals.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Fit the maximum-likelihood problem's profiles in parallel (off inside parallel callers).</summary>
    public bool Parallel { get; init; } = true;

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range.</exception>
    public void Validate()
    {
        if (FrequencyHz is { } f && !(f > 0 && double.IsFinite(f))) throw new InputException($"frequency: {f} Hz must be finite and > 0");
        if (!(Confidence > 0.5 && Confidence < 1)) throw new InputException($"confidence: {Confidence} is out of range; allowed 0.5 < C < 1");
    }
}

/// <summary>A fitted value with its standard error and profile-likelihood interval (null ends where the profile never rose far enough).</summary>
public sealed record RingdownEstimate(double Value, double StandardError, double? Low, double? High);

/// <summary>
/// A fitted ring-down: energy decay rate γ (s⁻¹), linewidth γ/2π, Q = 2πf/γ, the initial value and the thermal floor, in the
/// data's units (for amplitudes, the floor is the rms amplitude the decay settles to).
/// </summary>
public sealed record RingdownResult(
    RingdownData Data, RingdownSettings Settings,
    RingdownEstimate DecayRate, RingdownEstimate LinewidthHz, RingdownEstimate? QualityFactor,
    RingdownEstimate Initial, RingdownEstimate Floor, double? NoiseSigma,
    ImmutableArray<double> Model, ImmutableArray<double> Residuals,
    double Deviance, int DegreesOfFreedom, double? PValue,
    Provenance Provenance, ImmutableArray<string> Warnings, WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);
}

/// <summary>
/// Maximum-likelihood fit of a ring-down, mean energy E(t) = E₀e^{−γt} + E_th (amplitude: A(t)² = A₀²e^{−γt} + A_th²), with
/// the exact likelihood of the declared noise: Gaussian with stated σ (−2 ln L = χ²), Gaussian of unknown σ (σ profiled:
/// N ln(RSS/N)), or exponential per energy point (−2 ln L = 2Σ[ln m + E/m], the energy distribution of a thermal state).
/// Intervals are profile likelihood (D. J. Venzon, S. H. Moolgavkar, Appl. Stat. 37, 87 (1988)).
/// </summary>
public static class RingdownAnalysis
{
    /// <summary>Fits the ring-down.</summary>
    /// <exception cref="InputException">Too few points, times not increasing, or values impossible for the noise model.</exception>
    public static RingdownResult Solve(RingdownData data, RingdownSettings? settings = null)
    {
        long start = Stopwatch.GetTimestamp();
        settings ??= new RingdownSettings();
        settings.Validate();
        Check(data);
        var t = data.TimesS;
        var y = data.Values;
        int n = t.Length;
        bool energy = data.Kind == RingdownKind.Energy;
        var parameters = Parameters(data);
        var objective = Minus2LogLikelihood(data);
        var fit = MaximumLikelihood.Fit(objective, parameters, new MaximumLikelihoodSettings { Confidence = settings.Confidence, Parallel = settings.Parallel });
        var warnings = new List<string>(fit.Warnings);
        var b = fit.Estimates;
        var model = Model(data, b).ToImmutableArray();
        double? sigmaHat = null;
        double deviance;
        ImmutableArray<double> residuals;
        if (energy)
        {
            // Deviance of the exponential (gamma family, shape 1): 2Σ[E/m − 1 − ln(E/m)].
            deviance = 2 * y.Select((v, i) => v / model[i] - 1 - Math.Log(Math.Max(v, 1e-300) / model[i])).Sum();
            residuals = [.. y.Select((v, i) => (v - model[i]) / model[i])];
        }
        else if (data.Sigmas is { } sigma)
        {
            deviance = fit.Minimum;
            residuals = [.. y.Select((v, i) => (v - model[i]) / sigma[i])];
        }
        else
        {
            double rss = y.Select((v, i) => (v - model[i]) * (v - model[i])).Sum();
            sigmaHat = Math.Sqrt(rss / (n - 3));
            deviance = rss / (sigmaHat.Value * sigmaHat.Value);
            residuals = [.. y.Select((v, i) => (v - model[i]) / sigmaHat.Value)];
        }
        int dof = n - 3;
        double? p = data.Kind == RingdownKind.Amplitude && data.Sigmas is not null && dof > 0 ? 1 - ChiSquared.CDF(dof, deviance) : null;
        if (p is < 1e-3) warnings.Add($"the data scatter more than the stated σ allow (χ² = {deviance:G4} for {dof} degrees of freedom, p = {p:G3})");

        RingdownEstimate Estimate(int i, Func<double, double>? map = null)
        {
            map ??= x => x;
            var interval = fit.Intervals[i];
            double value = map(b[i]);
            // Through a monotone map the interval maps end to end; the standard error by the derivative.
            double h = 1e-6 * b[i], sd = fit.StandardErrors[i];
            // At a value of 0 (a floor on its bound) the map may have no derivative (√): the change over one standard error instead.
            double se = h > 0 ? Math.Abs((map(b[i] + h) - map(b[i] - h)) / (2 * h)) * sd : Math.Abs(map(b[i] + sd) - map(b[i]));
            // A profile still flat at the lower bound of a non-negative parameter leaves the interval open down to 0.
            double? lo = interval is { LowReached: true } ? map(interval.Low) : interval is not null && fit.Parameters[i].IsLogarithmic ? map(0) : null;
            double? hi = interval is { HighReached: true } ? map(interval.High) : null;
            // A profile end on the estimate itself (seen for a floor near 0 on the log scale) bounds nothing: fall back to the
            // Wald end from the observed information.
            if (interval is { HighReached: true } && !(interval.High > b[i] * (1 + 1e-6)) && double.IsFinite(fit.StandardErrors[i]))
                hi = map(b[i] + Normal.InvCDF(0, 1, 0.5 + settings.Confidence / 2) * fit.StandardErrors[i]);
            if (lo > hi) (lo, hi) = (hi, lo);
            return new RingdownEstimate(value, se, lo, hi);
        }
        var gamma = Estimate(1);
        var linewidth = Estimate(1, g => g / (2 * Math.PI));
        var q = settings.FrequencyHz is { } f ? Estimate(1, g => 2 * Math.PI * f / g) : null;
        // For amplitudes the fit runs on squares; report amplitudes.
        var initial = Estimate(0, energy ? null : Math.Sqrt);
        var floorEstimate = Estimate(2, energy ? null : Math.Sqrt);
        if (floorEstimate.Value < 1e-3 * initial.Value) warnings.Add("the thermal floor is not resolved above zero; the decay rate assumes the data reach it");
        if (t[^1] - t[0] < 2 / gamma.Value) warnings.Add($"the record spans {(t[^1] - t[0]) * gamma.Value:G3} energy decay times; the floor and γ are correlated (record at least a few 1/γ)");
        return new RingdownResult(data, settings, gamma, linewidth, q, initial, floorEstimate, sigmaHat, model, residuals, deviance, dof, p,
            Provenance.Standalone(data.Source), [.. warnings], WorkStatistics.Since(start, fit.Evaluations));
    }

    /// <summary>
    /// The parameters of the likelihood, in order: initial energy E₀ (amplitudes: A₀²), energy decay rate γ (s⁻¹) and floor
    /// E_th (amplitudes: A_th²), each with a start from the data: the floor from the tail, γ from the 1/e time.
    /// </summary>
    public static FitParameter[] Parameters(RingdownData data)
    {
        var t = data.TimesS;
        int n = t.Length;
        bool energy = data.Kind == RingdownKind.Energy;
        double[] e = [.. data.Values.Select(v => energy ? v : v * v)];
        double floor = Math.Max(e.Skip(n - Math.Max(n / 10, 1)).Average(), 1e-9 * e.Max());
        double first = Math.Max(e.Take(Math.Min(3, n)).Average() - floor, 1e-6 * e.Max());
        double t1e = t.Zip(e).FirstOrDefault(p => p.Second - floor < first / Math.E, (t[^1], 0)).Item1 - t[0];
        double gamma0 = 1 / Math.Max(t1e, (t[^1] - t[0]) / n);
        return
        [
            new(energy ? "initial energy" : "initial amplitude squared", first, ParameterDomain.Positive),
            new("decay rate", gamma0, ParameterDomain.Positive),
            new("floor", floor, ParameterDomain.NonNegative),
        ];
    }

    /// <summary>The mean energy E₀e^{−γ(t − t₀)} + E_th at time t, for the parameters b of <see cref="Parameters"/> (t₀ the first time).</summary>
    private static double Mean(RingdownData data, IReadOnlyList<double> b, double time) => b[0] * Math.Exp(-b[1] * (time - data.TimesS[0])) + b[2];

    /// <summary>The model at each time of the data: mean energy, or for amplitudes its square root.</summary>
    public static double[] Model(RingdownData data, IReadOnlyList<double> b) =>
        [.. data.TimesS.Select(time => data.Kind == RingdownKind.Energy ? Mean(data, b, time) : Math.Sqrt(Mean(data, b, time)))];

    /// <summary>
    /// −2 ln L of the parameters of <see cref="Parameters"/> (up to a constant): exponential per energy point, χ² with stated σ,
    /// or N ln(RSS/N) with a common unknown σ profiled out.
    /// </summary>
    public static Func<double[], double> Minus2LogLikelihood(RingdownData data)
    {
        Check(data);
        var t = data.TimesS;
        var y = data.Values;
        int n = t.Length;
        return data switch
        {
            { Kind: RingdownKind.Energy } => b =>
            {
                double s = 0;
                for (int i = 0; i < n; i++) { double m = Mean(data, b, t[i]); s += Math.Log(m) + y[i] / m; }
                return 2 * s;
            },
            { Sigmas: { } sigma } => b =>
            {
                double s = 0;
                for (int i = 0; i < n; i++) { double r = (y[i] - Math.Sqrt(Mean(data, b, t[i]))) / sigma[i]; s += r * r; }
                return s;
            },
            _ => b =>
            {
                double s = 0;
                for (int i = 0; i < n; i++) { double r = y[i] - Math.Sqrt(Mean(data, b, t[i])); s += r * r; }
                return n * Math.Log(s / n);
            },
        };
    }

    /// <summary>
    /// What <see cref="Minus2LogLikelihood"/> of energies is at the saturated model (every mean equal to its point), 2Σ[ln E + 1]:
    /// subtracted, it leaves the deviance 2Σ[E/m − 1 − ln(E/m)]. Zero for amplitudes (with stated σ the χ² is already a deviance).
    /// </summary>
    public static double SaturatedMinus2LogLikelihood(RingdownData data) =>
        data.Kind == RingdownKind.Energy ? 2 * data.Values.Sum(v => Math.Log(Math.Max(v, 1e-300)) + 1) : 0;

    /// <summary>Checks that the data can be fitted: at least 5 points, increasing times, energies ≥ 0, σ &gt; 0.</summary>
    /// <exception cref="InputException">The data cannot be fitted; the message names the file.</exception>
    public static void Check(RingdownData data)
    {
        int n = data.TimesS.Length;
        if (n < 5) throw new InputException($"data {data.Source}: {n} points; a ring-down fit needs at least 5");
        if (data.Values.Length != n || (data.Sigmas is { } s && s.Length != n)) throw new ArgumentException("columns differ in length");
        for (int i = 1; i < n; i++)
            if (!(data.TimesS[i] > data.TimesS[i - 1])) throw new InputException($"data {data.Source}: time must increase (row {i + 1})");
        if (data.Kind == RingdownKind.Energy && data.Values.Any(v => !(v >= 0)))
            throw new InputException($"data {data.Source}: an energy must be ≥ 0 (the exponential noise model has no negative values)");
        if (data.Sigmas is { } sigma && sigma.Any(v => !(v > 0))) throw new InputException($"data {data.Source}: every sigma must be > 0");
    }
}

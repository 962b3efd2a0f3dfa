using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>
/// A parameter held fixed at a value known to ± σ: the fit reports the shift of each estimate per 1σ of it. Checked against the
/// closed-form weighted least-squares estimate of a model linear in the fitted parameter.
/// </summary>
public class FitFixedTests
{
    private const double Nth = 40, LinewidthHz = 10, Sigma = 0.5;

    /// <summary>
    /// Occupancies of a mode released from the ground state, n(t) = n_th (1 − e^{−γt}) (the damped oscillator's approach to its
    /// bath, common practice), exact and with Gaussian errors σ: for a fixed γ' the fit of n_th alone is linear least squares,
    /// n̂(γ') = Σ d f(γ') / Σ f(γ')² with f = 1 − e^{−γ't}, so the bias per +1σ of γ is ½[n̂(γ + σ_γ) − n̂(γ − σ_γ)].
    /// </summary>
    [Theory]
    [InlineData(new[] { 0.002, 0.004, 0.006, 0.008, 0.01 }, true)]   // early delays: n(t) ≈ γ n_th t, n_th and γ trade off
    [InlineData(new[] { 0.3, 0.35, 0.4 }, false)]                     // settled to the bath: γ no longer matters
    public void BiasOfAFixedLinewidthIsTheLeastSquaresShift(double[] delays, bool warned)
    {
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, 0, 0.45);
        double gamma = 2 * Math.PI * LinewidthHz, sdHz = 1;
        double F(double g, double t) => 1 - Math.Exp(-g * t);
        double Estimate(double g) => delays.Sum(t => Nth * F(gamma, t) * F(g, t)) / delays.Sum(t => F(g, t) * F(g, t));
        double expected = 0.5 * (Estimate(2 * Math.PI * (LinewidthHz + sdHz)) - Estimate(2 * Math.PI * (LinewidthHz - sdHz)));

        var data = new FitData(DataShape.Occupancies, [.. delays.Select((t, k) =>
            new DelayObservation(t, 0, double.NaN, double.NaN, null, 0, 0, Nth * F(gamma, t), Sigma, $"row {k + 1}"))], "exact");
        var settings = new FitSettings
        {
            Profiles = false,
            Parallel = false,
            Fixed = [FitPrior.Parse($"modes.drum.linewidth={LinewidthHz} Hz±{sdHz} Hz", truth, "fixed")],
        };
        var fit = FitAnalysis.Solve(truth, settings, data);

        // The default free set loses the fixed linewidth and keeps the bath occupancy.
        Assert.Equal(["modes.drum.bath.occupancy"], fit.Paths.Select(p => p.Text));
        Assert.Equal(Nth, fit.Parameters[0].Value, 1e-3 * Nth);
        var bias = Assert.Single(fit.FixedBiases);
        // The optimiser stops within ~1e-6 relative; the shift is a difference of two optima: allow 1% or 1e-4 absolute.
        Assert.Equal(expected, bias.ShiftPerSd[0], Math.Max(0.01 * Math.Abs(expected), 1e-4));
        Assert.Equal(warned, fit.Warnings.Any(w => w.StartsWith("modes.drum.linewidth is fixed at", StringComparison.Ordinal)));
    }

    [Fact]
    public void AFixedParameterCannotAlsoBeFree()
    {
        var truth = SyntheticData.SingleMode(Nth, LinewidthHz, 0, 0.05);
        var data = SyntheticData.Variances(truth, [0.01, 0.02, 0.03], 1000, seed: 3);
        var settings = new FitSettings { Free = ["modes.drum.linewidth"], Fixed = [FitPrior.Parse("modes.drum.linewidth=10 Hz±1 Hz", truth, "fixed")] };
        Assert.Contains("fixed: modes.drum.linewidth is also free", Assert.Throws<InputException>(() => FitAnalysis.Solve(truth, settings, data)).Message);
        var bounded = new FitSettings { Fixed = [FitPrior.Parse("modes.drum.linewidth=5 Hz..20 Hz", truth, "fixed")] };
        Assert.Contains("VALUE±SD", Assert.Throws<InputException>(() => FitAnalysis.Solve(truth, bounded, data)).Message);
    }
}

using System.Collections.Immutable;
using Decohere.Analyses.Fitting.Joint;
using Decohere.Analyses.Spectra;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Statistics;
using Decohere.Tests.Engine;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>Sideband-asymmetry data as a term of the joint fit.</summary>
public class JointSidebandTests
{
    private const double KappaHz = 100e3, GammaHz = 10;

    private static JointFitProblem Problem(Scenario scenario, ImmutableArray<SidebandRatioPoint> points)
    {
        var path = ParameterPath.Parse("modes.m.bath.occupancy", scenario);
        ImmutableArray<JointParameter> parameters = [new("n_bath", Dimension.Dimensionless, 1, ParameterDomain.NonNegative, null, ["sidebands"], ["sidebands: modes.m.bath.occupancy"])];
        ImmutableArray<IJointTerm> terms = [new SidebandTerm("sidebands", "test", scenario, SpectrumAnalysis.AsymmetryPair(scenario, null), points, [(path, 0)])];
        return new JointFitProblem("sidebands", "test", "", parameters, terms, [], []);
    }

    /// <summary>
    /// Weak probes (C = 4G²/κγ = 10⁻⁴) on a cold cavity read ξ = n/(n + 1) (A. H. Safavi-Naeini et al., Phys. Rev. Lett. 108,
    /// 033602 (2012)): asymmetries made from that law for n = 2.5 and fitted alone give back n. The model's corrections are
    /// O(C) and O(γ/κ) = 10⁻⁴; with σ_ξ = 0.002 per point the fit's own standard error is ≈ 0.02 quanta; we allow 2e-3·n.
    /// </summary>
    [Fact]
    public void WeakProbesOnAColdCavityGiveBackTheOccupancyTheAsymmetryLawEncodes()
    {
        double n = 2.5, g = Math.Sqrt(1e-4 * KappaHz * GammaHz) / 2;
        var scenario = TestScenarios.Optomechanical("full", KappaHz, GammaHz, 1.0, 0, g, g);
        double xi = n / (n + 1);
        var fit = JointFitAnalysis.Solve(Problem(scenario, [new(null, xi, 0.002), new(null, xi, 0.002), new(null, xi, 0.002)]),
            new JointFitSettings { Starts = 1, Parallel = false });
        var e = fit.Parameters[0].Estimate;
        Assert.Equal(n, e.Value, 2e-3 * n);
        Assert.True(e.Low < n && n < e.High);
    }

    /// <summary>
    /// A hot cavity (n_c = 0.5) biases the naive reading ξ/(1 − ξ) (M. Aspelmeyer et al., Rev. Mod. Phys. 86, 1391 (2014),
    /// sec. VII.B); the term models the cavity, so fitting asymmetries the hot device produces returns the bath's n, not the
    /// naive value. Points at several probe couplings exercise the per-point coupling.
    /// </summary>
    [Fact]
    public void AHotCavityIsModelledNotMisreadAndProbeCouplingsArePerPoint()
    {
        double n = 2.5, g = Math.Sqrt(1e-3 * KappaHz * GammaHz) / 2;
        var hot = TestScenarios.Optomechanical("full", KappaHz, GammaHz, n, 0.5, g, g);
        var pair = SpectrumAnalysis.AsymmetryPair(hot, null);
        double[] couplings = [g, 2 * g, 3 * g];
        var red = ParameterPath.Parse("stages.drive.tones[0].coupling", hot);
        var blue = ParameterPath.Parse("stages.drive.tones[1].coupling", hot);
        ImmutableArray<SidebandRatioPoint> points = [.. couplings.Select(c => new SidebandRatioPoint(c, SpectrumAnalysis.AsymmetryRatio(blue.Set(red.Set(hot, c), c), pair.Stage, pair.Red, pair.Blue), 0.002))];
        double naive = points[0].Ratio / (1 - points[0].Ratio);
        Assert.True(Math.Abs(naive - n) > 0.05 * n, $"naive {naive}");
        // Start the fit from a colder bath than the truth.
        var start = ParameterPath.Parse("modes.m.bath.occupancy", hot).Set(hot, 1.0);
        var fit = JointFitAnalysis.Solve(Problem(start, points), new JointFitSettings { Starts = 1, Parallel = false, Profiles = false });
        Assert.Equal(n, fit.Parameters[0].Estimate.Value, 1e-4 * n);
        Assert.Equal(points.Length, fit.DataSets[0].Points.Length);
    }
}

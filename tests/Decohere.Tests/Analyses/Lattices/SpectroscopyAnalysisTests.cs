using Decohere.Analyses.Lattices;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Lattices;

public class SpectroscopyAnalysisTests
{
    [Fact]
    public void DampingUnderOneCollectiveModeIsTheSingleModeRateScaledByTheParticipation()
    {
        // One red tone on collective mode k couples drum j to that mode with G_jk = g₀√N·|ψ_k(j)|²; a single cavity mode of
        // linewidth κ damps a drum detuned by δ from its sideband at 4G²/κ·1/(1 + (2δ/κ)²) (PHYSICS.md's 4G²/κ; the
        // detuned Lorentzian A₋ of F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007)). The full model's eigenvalues
        // must agree up to the neglected terms: G²/κ² (strong coupling) and κ²/Δν² from the other collective modes,
        // below 1e-3 here; allow 1% relative.
        var s = ModesAnalysisTests.Chain(10, 60, 100);
        var result = SpectroscopyAnalysis.Solve(s, new SpectroscopySettings { Photons = 1e5, Averages = 50 });
        int checkedRows = 0;
        foreach (var row in result.Rows.Where(r => r.Participation > 0.02))
        {
            var site = s.Lattice!.Sites[row.Site];
            double g = site.G0Hz * Math.Sqrt(1e5) * row.Participation;
            double expected = 4 * g * g / row.ModeLinewidthHz / (1 + Math.Pow(2 * row.DrumDetuningHz / row.ModeLinewidthHz, 2));
            Assert.Equal(expected, row.ModelDampingHz, 0.01 * expected);
            Assert.Equal(row.Participation, row.ModelParticipation, 0.01 * row.Participation);
            checkedRows++;
        }
        Assert.True(checkedRows > 30);
    }

    [Fact]
    public void ProbeDriftEqualsTheModelBuiltWithTheStage()
    {
        // The spectroscopy adds a probe's detunings and tones to a drift built once; the model built with the whole stage
        // through H → A = Ω(𝐇 + Im C) must be the same matrix (to rounding).
        var s = ModesAnalysisTests.Chain(6, 60, 100, "  disorder: { frequency: 2 MHz, linewidth: 100 kHz, seed: 1 }");
        var idle = new Stage("probe", 1, [], System.Collections.Immutable.ImmutableDictionary<string, Bath>.Empty, System.Collections.Immutable.ImmutableDictionary<string, double>.Empty);
        var stage = LatticeLoader.Frame(s.Lattice!, s.Modes, s.Couplings, idle, new CollectiveTone(2, Sideband.Red, 1e6));
        var baseModel = Decohere.Model.ModelBuilder.Build(s with { Stages = [idle] }, idle);
        var added = SpectroscopyAnalysis.WithHamiltonian(SpectroscopyAnalysis.AmplitudeDrift(baseModel), baseModel, stage);
        var built = SpectroscopyAnalysis.AmplitudeDrift(Decohere.Model.ModelBuilder.Build(s with { Stages = [stage] }, stage));
        Assert.True((added - built).FrobeniusNorm() < 1e-12 * built.FrobeniusNorm());
    }

    [Fact]
    public void FittedLinewidthsAreUnbiasedWithinTheirStatedErrors()
    {
        // z = (fit − true)/stated error over 400 simulated spectra: mean within 4σ of 0 (σ = 1/√400) and standard deviation
        // within 4σ of 1 (σ ≈ 1/√(2·399)); a calibrated error bar is what the reconstruction's likelihood relies on.
        var settings = new SpectroscopySettings { Averages = 100, Points = 61 };
        var z = new double[400];
        for (int i = 0; i < z.Length; i++)
        {
            var random = RandomStream.For(42, Decohere.Core.SeedStream.Spectroscopy, i);
            var fit = LorentzianFit.Measure(12.5, 3.0, settings, ref random)!.Value;
            z[i] = (fit.LinewidthHz - 12.5) / fit.LinewidthErrHz;
        }
        double mean = z.Average(), sd = Math.Sqrt(z.Sum(x => (x - mean) * (x - mean)) / (z.Length - 1));
        Assert.InRange(mean, -4 / Math.Sqrt(400), 4 / Math.Sqrt(400));
        Assert.InRange(sd, 1 - 4 / Math.Sqrt(2 * 399), 1 + 4 / Math.Sqrt(2 * 399));
    }

    [Fact]
    public void GammaDeviatesHaveTheirMeanAndVariance()
    {
        // Gamma(a, 1): mean a, variance a (handbook). 20000 draws: mean within 4σ = 4√(a/20000); variance within 4σ of a,
        // σ² of a sample variance ≈ (μ₄ − σ⁴)/N with μ₄ = 3a² + 6a for the Gamma distribution.
        const int n = 20000;
        foreach (double a in new[] { 1.0, 7.0, 200.0 })
        {
            var random = RandomStream.For(7, Decohere.Core.SeedStream.Spectroscopy, (long)a);
            var x = new double[n];
            for (int i = 0; i < n; i++) x[i] = LorentzianFit.Gamma(a, ref random);
            double mean = x.Average(), variance = x.Sum(v => (v - mean) * (v - mean)) / (n - 1);
            Assert.InRange(mean, a - 4 * Math.Sqrt(a / n), a + 4 * Math.Sqrt(a / n));
            double sdVar = Math.Sqrt((3 * a * a + 6 * a - a * a) / n);
            Assert.InRange(variance, a - 4 * sdVar, a + 4 * sdVar);
        }
    }

    [Fact]
    public void MeasuredParticipationsScatterAboutTheModelsWithinTheirErrors()
    {
        // The simulated lab table: participations inferred from fitted linewidths must scatter about the full model's with
        // their stated errors (|z| < 4 for all but a few per mille of rows with a well-measured participation).
        var s = ModesAnalysisTests.Chain(10, 60, 100);
        var result = SpectroscopyAnalysis.Solve(s, new SpectroscopySettings { Photons = 1e6, Averages = 400 });
        var rows = result.Rows.Where(r => r.ModelParticipation > 0.05).ToArray();
        var z = rows.Select(r => (r.MeasuredParticipation!.Value - r.ModelParticipation) / r.MeasuredParticipationErr!.Value).ToArray();
        Assert.True(z.Count(x => Math.Abs(x) > 4) <= 1, string.Join(", ", z.Select(x => x.ToString("F2"))));
        Assert.InRange(z.Average(), -4 / Math.Sqrt(z.Length), 4 / Math.Sqrt(z.Length));
    }

    [Fact]
    public void ScenarioWithoutALatticeIsRefusedInTheLibrarysWords()
    {
        var e = Assert.Throws<Decohere.Core.InputException>(() => SpectroscopyAnalysis.Solve(ScenarioLoader.Demo(), new SpectroscopySettings()));
        Assert.Contains("no lattice", e.Message);
        var bad = Assert.Throws<Decohere.Core.InputException>(() => SpectroscopyAnalysis.Solve(ModesAnalysisTests.Chain(4, 60, 100), new SpectroscopySettings { Averages = 0 }));
        Assert.Contains("averages", bad.Message);
    }
}

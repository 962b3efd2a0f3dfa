using System.Collections.Immutable;
using Decohere.Analyses.Lattices;
using Decohere.Core;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Lattices;

public class ReconstructionAnalysisTests
{
    // Simulated lab data from a known network: every eigenfrequency with Gaussian error σν, every participation with σp.
    private static SpectroscopyData Simulate(Scenario truth, double sigmaNu, double sigmaP, long seed, bool participations = true)
    {
        var modes = LatticeModes.Solve(truth, truth.Lattice!);
        var random = RandomStream.For(seed, SeedStream.Spectroscopy, 99);
        var nu = modes.Select((m, k) => new MeasuredMode(k, m.FrequencyHz + sigmaNu * random.NextNormal(), sigmaNu)).ToImmutableArray();
        var p = participations
            ? modes.SelectMany((m, k) => Enumerable.Range(0, truth.Lattice!.Count)
                .Select(j => new MeasuredParticipation(k, j, m.Weight(j) + sigmaP * random.NextNormal(), sigmaP))).ToImmutableArray()
            : [];
        return new SpectroscopyData(nu, p);
    }

    private static double[] TrueTerms(Scenario truth, ReconstructionResult fit)
    {
        var (h, _) = truth.Lattice!.Hamiltonian(truth);
        return fit.Terms.Select(t => h[t.SiteA, t.SiteB]).ToArray();
    }

    [Fact]
    public void RecoversADisorderedChainWithCalibratedIntervals()
    {
        // The truth: a disordered chain (σ 3 MHz on every cavity frequency and coupling). The fit starts from the clean
        // lattice. Over 60 seeds of simulated data, z = (fit − truth)/stderr must be standard normal: mean z² within 4σ of 1
        // (σ = √(2/N) for N = 60·15 values, ignoring their correlation within a seed, which widens it by at most a
        // factor ~2, so 8·√(2/N) is allowed), and the 95% intervals must cover the truth 95% of the time (binomial σ with the same
        // allowance: ±4·2·√(0.95·0.05/N)).
        string lattice(string disorder) => $$"""
              kind: chain
              sites: 8
              couplings: [60 MHz, 100 MHz]
              cavity: { frequency: 6 GHz, linewidth: 1 MHz }
              drum: { frequency: 5 MHz, spacing: 50 kHz, linewidth: 1 Hz, bath: { occupancy: 60 }, g0: 20 Hz }
            {{disorder}}
            """;
        var truth = Scenarios.LatticeLoaderTests.Load(lattice("  disorder: { frequency: 3 MHz, coupling: 3 MHz, seed: 4 }"));
        var clean = Scenarios.LatticeLoaderTests.Load(lattice(""));
        var z2 = new List<double>();
        int covered = 0, total = 0;
        for (int seed = 0; seed < 60; seed++)
        {
            var fit = ReconstructionAnalysis.Solve(clean, Simulate(truth, 50e3, 2e-3, seed), new ReconstructionSettings());
            Assert.Empty(fit.UndeterminedCombinations);
            var exact = TrueTerms(truth, fit);
            for (int i = 0; i < fit.Terms.Length; i++)
            {
                var t = fit.Terms[i];
                double z = (t.ValueHz - exact[i]) / t.StdErrHz;
                z2.Add(z * z);
                total++;
                if (exact[i] >= t.LowHz && exact[i] <= t.HighHz) covered++;
            }
        }
        Assert.InRange(z2.Average(), 1 - 8 * Math.Sqrt(2.0 / total), 1 + 8 * Math.Sqrt(2.0 / total));
        double coverage = (double)covered / total;
        Assert.InRange(coverage, 0.95 - 8 * Math.Sqrt(0.95 * 0.05 / total), 0.95 + 8 * Math.Sqrt(0.95 * 0.05 / total));
    }

    [Fact]
    public void NoiselessDataGiveTheExactMatrix()
    {
        // With vanishing errors the least-squares solution is the matrix itself (the inverse eigenvalue problem has the
        // truth as a zero-residual solution; M. T. Chu, G. H. Golub, Inverse Eigenvalue Problems, Oxford 2005, recalled).
        var truth = Scenarios.LatticeLoaderTests.Load(Scenarios.LatticeLoaderTests.Honeycomb("shape: hexagon\n  size: 1", 100,
            "  disorder: { frequency: 5 MHz, coupling: 5 MHz, seed: 8 }\n  next_nearest: 4 MHz"));
        var nominal = Scenarios.LatticeLoaderTests.Load(Scenarios.LatticeLoaderTests.Honeycomb("shape: hexagon\n  size: 1", 100, "  next_nearest: 0 MHz"));
        var fit = ReconstructionAnalysis.Solve(nominal, Simulate(truth, 1e-3, 1e-12, 1), new ReconstructionSettings());
        var exact = TrueTerms(truth, fit);
        for (int i = 0; i < exact.Length; i++) Assert.Equal(exact[i], fit.Terms[i].ValueHz, 1e-3);
        Assert.Contains(fit.Terms, t => t.Kind == TermKind.NextNearest);
    }

    [Fact]
    public void TermsNotFittedKeepTheScenariosValues()
    {
        // With on-site terms off, the cavities' frequency offsets stay the scenario's: noiseless data from that same
        // scenario are then fitted exactly (zero residual), which fails if the offsets were dropped to zero.
        var s = ModesAnalysisTests.Chain(6, 60, 100, "  disorder: { frequency: 5 MHz, seed: 2 }");
        var fit = ReconstructionAnalysis.Solve(s, Simulate(s, 1e-3, 1e-12, 5), new ReconstructionSettings { OnSite = false });
        Assert.DoesNotContain(fit.Terms, t => t.Kind == TermKind.OnSite);
        Assert.True(fit.ChiSquare < 10 * fit.DegreesOfFreedom, $"χ² = {fit.ChiSquare}");
    }

    [Fact]
    public void SpectrumAloneLeavesTheChainsCouplingsUndetermined()
    {
        // A Jacobi matrix with zero diagonal has a spectrum symmetric about zero, so 6 eigenvalues give only 3 numbers for
        // 5 couplings; the spectrum of the matrix and of a submatrix, or the eigenvectors' end components, are needed
        // (H. Hochstadt, Linear Algebra Appl. 8, 435 (1974); Chu & Golub 2005, ch. 4; recalled from memory). The Fisher
        // matrix must have a two-dimensional null space and the warning must name couplings.
        var s = ModesAnalysisTests.Chain(6, 60, 100);
        var fit = ReconstructionAnalysis.Solve(s, Simulate(s, 10e3, 1, 3, participations: false), new ReconstructionSettings { OnSite = false });
        Assert.Equal(2, fit.UndeterminedCombinations.Length);
        Assert.Contains(fit.Warnings, w => w.Contains("do not determine") && w.Contains("nearest["));
        Assert.Contains(fit.Terms, t => !t.Identified);
    }

    [Fact]
    public async Task UndeterminedTermsHaveNullErrorsInTheTable()
    {
        // The same undetermined fit as above, written and read back by DuckDB (an independent Parquet reader): a term the
        // data do not determine has no error or interval, so those cells are null, never NaN; the others are finite.
        var s = ModesAnalysisTests.Chain(6, 60, 100);
        var fit = ReconstructionAnalysis.Solve(s, Simulate(s, 10e3, 1, 3, participations: false), new ReconstructionSettings { OnSite = false });
        string dir = TestPaths.NewTempDirectory();
        await new Decohere.Reports.ReconstructReport().WriteAsync(fit, dir);
        string path = Path.Combine(dir, "reconstruct.parquet").Replace("'", "''");
        var rows = DuckDb.Query($"SELECT identified, stderr_hz, ci_low_hz, ci_high_hz, isfinite(value_hz) FROM read_parquet('{path}')");
        Assert.Equal(fit.Terms.Length, rows.Count);
        Assert.Contains(rows, r => !(bool)r[0]!);
        foreach (var r in rows)
        {
            Assert.True((bool)r[4]!);
            if ((bool)r[0]!) Assert.All(r[1..4], v => Assert.True(double.IsFinite((double)v!)));
            else Assert.All(r[1..4], Assert.Null);
        }
    }

    [Fact]
    public async Task SimulatedSpectroscopyFitsWithAChiSquareOfItsDegreesOfFreedom()
    {
        // End to end through the files a lab would have: spectroscopy.parquet (damping weights |ψ|⁴ from Lorentzian fits,
        // mode frequencies with their error) read back and fitted. If the simulated errors are calibrated and the damping
        // measures the mode shapes, χ² follows the χ² distribution with its degrees of freedom: within 5σ = 5√(2·dof).
        var s = Scenarios.LatticeLoaderTests.Load(Scenarios.LatticeLoaderTests.Ssh.Replace("1 MHz", "300 kHz") + "\n  disorder: { frequency: 2 MHz, seed: 6 }\n");
        var spectroscopy = SpectroscopyAnalysis.Solve(s, new SpectroscopySettings { Photons = 1e5, Averages = 200 });
        string dir = TestPaths.NewTempDirectory();
        await new Decohere.Reports.ModesSpectroscopyReport().WriteAsync(spectroscopy, dir);
        var data = await Decohere.IO.ReconstructDataReader.ReadAsync(Path.Combine(dir, "spectroscopy.parquet"));
        Assert.All(data.Participations, p => Assert.True(p.Squared));
        var fit = ReconstructionAnalysis.Solve(s, data, new ReconstructionSettings());
        Assert.InRange(fit.ChiSquare, fit.DegreesOfFreedom - 5 * Math.Sqrt(2.0 * fit.DegreesOfFreedom), fit.DegreesOfFreedom + 5 * Math.Sqrt(2.0 * fit.DegreesOfFreedom));
        var exact = TrueTerms(s, fit);
        for (int i = 0; i < exact.Length; i++) Assert.InRange((fit.Terms[i].ValueHz - exact[i]) / fit.Terms[i].StdErrHz, -5, 5);
    }

    [Fact]
    public void DataOutsideTheLatticeAreRefusedInTheLibrarysWords()
    {
        var s = ModesAnalysisTests.Chain(4, 60, 100);
        var bad = new SpectroscopyData([new MeasuredMode(7, 0, 1)], []);
        var e = Assert.Throws<InputException>(() => ReconstructionAnalysis.Solve(s, bad, new ReconstructionSettings()));
        Assert.Contains("mode_index 7", e.Message);
        var few = new SpectroscopyData([new MeasuredMode(0, 0, 1)], []);
        Assert.Contains("values for", Assert.Throws<InputException>(() => ReconstructionAnalysis.Solve(s, few, new ReconstructionSettings())).Message);
    }
}

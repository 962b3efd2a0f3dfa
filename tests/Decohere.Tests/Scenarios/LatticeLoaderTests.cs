using System.Numerics;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Model;
using Decohere.Scenarios;

namespace Decohere.Tests.Scenarios;

public class LatticeLoaderTests
{
    internal static string Chain(string lattice, string stages = "  - { name: idle, duration: 1 ms }") => $"""
        name: lattice-test
        lattice:
        {lattice}
        stages:
        {stages}
        """;

    internal const string Ssh = """
          kind: chain
          sites: 10
          couplings: [80 MHz, 120 MHz]
          cavity: { frequency: 6 GHz, linewidth: 1 MHz, bath: { occupancy: 0.05 } }
          drum: { frequency: 5 MHz, spacing: 50 kHz, linewidth: 1 Hz, bath: { temperature: 15 mK }, g0: 20 Hz }
        """;

    internal static Scenario Load(string lattice, string stages = "  - { name: idle, duration: 1 ms }") =>
        ScenarioLoader.Parse(Chain(lattice, stages), "test.yaml");

    internal static string Honeycomb(string shape, double tMHz = 100, string extra = "") => $$"""
          kind: honeycomb
          {{shape}}
          couplings: [{{tMHz}} MHz]
          cavity: { frequency: 7 GHz, linewidth: 1 MHz }
          drum: { frequency: 4 MHz, linewidth: 1 Hz, bath: { occupancy: 100 }, g0: 20 Hz }
        {{extra}}
        """;

    private static ScenarioException Fails(string lattice, string stages = "  - { name: idle, duration: 1 ms }") =>
        Assert.Throws<ScenarioException>(() => Load(lattice, stages));

    [Fact]
    public void ChainExpandsToCellsOfACavityAndADrumWithAlternatingHopping()
    {
        var s = Load(Ssh);
        Assert.Equal(20, s.Modes.Length);
        Assert.Equal(9, s.Couplings.Length);
        // Bond i → i+1 is J₁ inside a unit cell (i even) and J₂ between cells (Su–Schrieffer–Heeger, Phys. Rev. Lett. 42, 1698 (1979)).
        for (int i = 0; i < 9; i++)
        {
            var c = s.Couplings[i];
            Assert.Equal(($"cavity_{i}", $"cavity_{i + 1}"), (c.ModeA, c.ModeB));
            Assert.Equal(i % 2 == 0 ? 80e6 : 120e6, c.RateHz, 6);
        }
        Assert.Equal(5.45e6, s.ModeNamed("drum_9").FrequencyHz, 3);
        Assert.Equal(ModeKind.Cavity, s.ModeNamed("cavity_3").Kind);
        Assert.NotNull(s.Lattice);
        Assert.Equal(EdgeKind.Other, s.Lattice!.Sites[0].Edge);
        Assert.Equal(EdgeKind.Bulk, s.Lattice.Sites[4].Edge);

        var ring = Load(Ssh + "\n  boundary: periodic\n  next_nearest: 5 MHz\n");
        Assert.Equal(10, ring.Couplings.Count(c => Math.Abs(c.RateHz) > 50e6));
        Assert.Equal(10, ring.Couplings.Count(c => c.RateHz == 5e6));
        Assert.All(ring.Lattice!.Sites, site => Assert.False(site.IsBoundary));
    }

    [Theory]
    // Site and bond counts of the molecular graphs these flakes are (benzene C6H6, coronene C24H12, hexabenzocoronene
    // C42H18, phenalene C13H9, triangulene C22H12): bonds = (3·C − H)/2 for sp² carbon with one H per edge carbon.
    [InlineData("shape: hexagon\n  size: 1", 6, 6)]
    [InlineData("shape: hexagon\n  size: 2", 24, 30)]
    [InlineData("shape: hexagon\n  size: 2\n  edges: armchair", 42, 54)]
    [InlineData("shape: triangle\n  size: 2", 13, 15)]
    [InlineData("shape: triangle\n  size: 3", 22, 27)]
    public void HoneycombFlakesHaveTheirMoleculesSitesAndBonds(string shape, int sites, int bonds)
    {
        var s = Load(Honeycomb(shape));
        Assert.Equal(sites, s.Lattice!.Count);
        Assert.Equal(bonds, s.Couplings.Length);
        Assert.Equal(2 * sites, s.Modes.Length);
        // Every bond joins the two sublattices (the honeycomb is bipartite).
        Assert.All(s.Lattice.Bonds, b => Assert.NotEqual(s.Lattice.Sites[b.A].Sublattice, s.Lattice.Sites[b.B].Sublattice));
    }

    [Fact]
    public void EdgeKindsOfAFlake()
    {
        // Zigzag edges: boundary sites alternate with bulk sites; armchair edges: boundary sites come in bonded pairs
        // (K. Nakada et al., Phys. Rev. B 54, 17954 (1996), Fig. 1). The armchair hexagon has only armchair edges.
        var armchair = Load(Honeycomb("shape: hexagon\n  size: 2\n  edges: armchair")).Lattice!;
        Assert.DoesNotContain(armchair.Sites, s => s.Edge == EdgeKind.Zigzag);
        Assert.Equal(18, armchair.Sites.Count(s => s.Edge == EdgeKind.Armchair));
        var rectangle = Load(Honeycomb("shape: rectangle\n  size: 6\n  rows: 4")).Lattice!;
        Assert.Contains(rectangle.Sites, s => s.Edge == EdgeKind.Zigzag);
        Assert.Contains(rectangle.Sites, s => s.Edge == EdgeKind.Armchair);
    }

    [Fact]
    public void DisorderIsSeededAndHasItsStatedSpread()
    {
        string text = Ssh.Replace("sites: 10", "sites: 100") + "\n  disorder: { frequency: 2 MHz, seed: 9 }\n";
        var a = Load(text);
        var b = Load(text);
        double[] f = a.Modes.Where(m => m.Kind == ModeKind.Cavity).Select(m => m.FrequencyHz - 6e9).ToArray();
        Assert.Equal(f, b.Modes.Where(m => m.Kind == ModeKind.Cavity).Select(m => m.FrequencyHz - 6e9).ToArray());
        // Sample σ of 100 Gaussian draws: relative standard error 1/√(2·99) ≈ 0.071; allow 4σ.
        double mean = f.Average();
        double sd = Math.Sqrt(f.Sum(x => (x - mean) * (x - mean)) / (f.Length - 1));
        Assert.InRange(sd / 2e6, 1 - 4 * 0.071, 1 + 4 * 0.071);
        var other = Load(Ssh.Replace("sites: 10", "sites: 100") + "\n  disorder: { frequency: 2 MHz, seed: 10 }\n");
        Assert.NotEqual(f[0], other.Modes[0].FrequencyHz - 6e9);
    }

    [Fact]
    public void CellOverridesReplaceTheDefaults()
    {
        var s = Load(Ssh + "\n  cells:\n    3: { cavity: { frequency: 6.01 GHz }, drum: { linewidth: 3 Hz, g0: 40 Hz, bath: { occupancy: 7 } } }\n");
        Assert.Equal(6.01e9, s.ModeNamed("cavity_3").FrequencyHz);
        Assert.Equal(3, s.ModeNamed("drum_3").LinewidthHz);
        Assert.Equal(7, s.ModeNamed("drum_3").Bath.Occupancy);
        Assert.Equal(40, s.Lattice!.Sites[3].G0Hz);
        Assert.Equal(20, s.Lattice.Sites[2].G0Hz);
    }

    [Fact]
    public void ProblemsNameTheirPathLineAndColumn()
    {
        var e = Fails(Ssh.Replace("couplings:", "coupling:").Replace("sites: 10", "sites: 300") + "\n  shape: hexagon\n  disorder: { frequncy: 1 MHz }\n");
        Assert.Contains(e.Problems, p => p.Path == "lattice.coupling" && p.Message.Contains("did you mean 'couplings'") && p.Line == 5);
        Assert.Contains(e.Problems, p => p.Path == "lattice.sites" && p.Message.Contains("300 is out of range") && p.Line == 4 && p.Column == 10);
        Assert.True(e.Problems.Any(p => p.Path == "lattice.shape" && p.Message.Contains("does not apply to kind chain")), e.Message);
        Assert.Contains(e.Problems, p => p.Path == "lattice.disorder.frequncy" && p.Message.Contains("did you mean 'frequency'"));

        var both = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Chain(Ssh).Replace("lattice:", "modes: {}\nlattice:"), "t.yaml"));
        Assert.Contains(both.Problems, p => p.Path == "modes" && p.Message.Contains("generates its modes"));

        var tone = Fails(Ssh, "  - { name: cool, duration: 1 ms, tones: [{ collective: 10, sideband: red, photons: 1e4 }] }");
        Assert.Contains(tone.Problems, p => p.Path == "stages[0].tones[0].collective" && p.Message.Contains("from 0 to 9"));

        var noLattice = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(ScenarioLoaderTests.Minimal.Replace(
            "- { cavity: lc, mechanical: drum, sideband: red, coupling: 20 kHz }", "- { collective: 0, sideband: red, photons: 10 }"), "t.yaml"));
        Assert.Contains(noLattice.Problems, p => p.Path == "stages[0].tones[0].collective" && p.Message.Contains("no lattice"));

        var honey = Fails(Honeycomb("shape: rectangle\n  size: 3").Replace("[100 MHz]", "[1 MHz, 2 MHz]"));
        Assert.Contains(honey.Problems, p => p.Path == "lattice.rows" && p.Message.Contains("missing"));
        Assert.Contains(honey.Problems, p => p.Path == "lattice.couplings" && p.Message.Contains("three"));
    }

    [Fact]
    public void TwoCoupledCavitiesSplitIntoNormalModes()
    {
        // Two modes detuned by ±Δ/2 and coupled by J(a†b + a b†) have normal modes at ±√(J² + Δ²/4) with the common
        // amplitude decay κ/2 (coupled-mode theory: H. A. Haus, Waves and Fields in Optoelectronics, Prentice-Hall 1984,
        // ch. 7, recalled from memory). The drift of the engine's model, built from the lattice's expansion, must have them.
        const string pair = """
              kind: explicit
              positions: [[0, 0], [1, 0], [2, 0]]
              bonds: [{ sites: [0, 1], rate: 3 MHz }, { sites: [1, 2], rate: 0 MHz }, { sites: [0, 2], rate: 0 MHz, kind: next-nearest }]
              cavity: { frequency: 6 GHz, linewidth: 500 kHz }
              drum: { frequency: 5 MHz, linewidth: 1 Hz, bath: { occupancy: 10 }, g0: 10 Hz }
              cells: { 0: { cavity: { frequency: 6.002 GHz } }, 1: { cavity: { frequency: 5.998 GHz } }, 2: { cavity: { frequency: 6.5 GHz } } }
            """;
        var s = Load(pair);
        var model = ModelBuilder.Build(s, s.Stages[0]);
        var eig = model.Drift.Evd().EigenValues;
        double splitting = Math.Sqrt(3e6 * 3e6 + 2e6 * 2e6);
        foreach (double expected in new[] { splitting, -splitting })
            Assert.Contains(eig, l => Math.Abs(l.Imaginary - 2 * Math.PI * expected) < 1e-6 * 2 * Math.PI * splitting
                && Math.Abs(l.Real + Math.PI * 500e3) < 1e-6 * Math.PI * 500e3);
        // The lattice's own collective modes agree (a third cavity, 500 MHz away and uncoupled, stays on its own).
        var modes = LatticeModes.Solve(s, s.Lattice!);
        Assert.Equal(-splitting, modes[0].FrequencyHz, 1e-6 * splitting);
        Assert.Equal(splitting, modes[1].FrequencyHz, 1e-6 * splitting);
        Assert.Equal(500e3, modes[1].LinewidthHz, 1e-6);
        Assert.Equal(500e6, modes[2].FrequencyHz, 1e-3);
        Assert.Equal(BondKind.NextNearest, s.Lattice!.Bonds[2].Kind);
        Assert.Equal(3e6, s.Couplings[0].RateHz);
        Assert.Equal(7e6, Load(pair.Replace("rate: 0 MHz, kind", "rate: 7 MHz, kind")).Couplings[2].RateHz);
    }

    [Fact]
    public void ACollectiveToneCouplesEveryCellInTheDrivenModesFrame()
    {
        var s = Load(Ssh, "  - { name: cool, duration: 1 ms, tones: [{ collective: 2, sideband: red, photons: 1e6 }] }");
        var stage = s.Stages[0];
        var mode = LatticeModes.Solve(s, s.Lattice!)[2];
        Assert.Equal(10, stage.Tones.Length);
        for (int j = 0; j < 10; j++)
        {
            // G_j = g₀√N·|ψ_k(j)|: the drive's field in cell j.
            Assert.Equal(20 * 1e3 * mode.Amplitudes[j].Magnitude, stage.Tones[j].CouplingHz, 1e-9);
            // The cavities rotate at the driven mode's frequency; the drums at their mean frequency.
            Assert.Equal(-mode.FrequencyHz, stage.DetuningsHz[$"cavity_{j}"], 1e-3);
            Assert.Equal(5e6 + 50e3 * j - 5.225e6, stage.DetuningsHz[$"drum_{j}"], 1e-6);
        }
        Assert.Equal(2, s.Lattice!.Drives["cool"].ModeIndex);
    }
}

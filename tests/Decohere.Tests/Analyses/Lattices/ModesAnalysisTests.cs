using Decohere.Analyses.Lattices;
using Decohere.Scenarios;
using Decohere.Tests.Scenarios;

namespace Decohere.Tests.Analyses.Lattices;

public class ModesAnalysisTests
{
    internal static Scenario Chain(int sites, double j1MHz, double j2MHz, string extra = "") => LatticeLoaderTests.Load($"""
          kind: chain
          sites: {sites}
          couplings: [{j1MHz} MHz, {j2MHz} MHz]
          cavity: {"{"} frequency: 6 GHz, linewidth: 1 MHz {"}"}
          drum: {"{"} frequency: 5 MHz, spacing: 50 kHz, linewidth: 1 Hz, bath: {"{"} occupancy: 60 {"}"}, g0: 20 Hz {"}"}
        {extra}
        """);

    private static ModesResult Solve(Scenario s) => ModesAnalysis.Solve(s, new ModesSettings());

    [Theory]
    [InlineData(0.3)]
    [InlineData(0.6)]
    [InlineData(0.85)]
    [InlineData(1.2)]
    [InlineData(2.0)]
    public void SshChainHasEdgeStatesExactlyInItsTopologicalPhase(double ratio)
    {
        // Su–Schrieffer–Heeger (Phys. Rev. Lett. 42, 1698 (1979)): an open chain ending on a weak bond, |J₁| < |J₂|, has
        // two states in the bulk gap (|E| < ||J₁| − |J₂||) localised at its ends; with |J₁| > |J₂| it has none.
        double j2 = 100, j1 = ratio * j2;
        var result = Solve(Chain(40, j1, j2));
        double gap = Math.Abs(j1 - j2) * 1e6;
        var inGap = result.Modes.Where(m => Math.Abs(m.FrequencyHz) < gap).ToArray();
        if (ratio < 1)
        {
            Assert.Equal(2, inGap.Length);
            Assert.All(inGap, m => Assert.True(m.IsEdgeState));
            Assert.Equal(2, result.Modes.Count(m => m.IsEdgeState));
            Assert.Equal(1, result.Chain!.Winding);
        }
        else
        {
            Assert.Empty(inGap);
            Assert.DoesNotContain(result.Modes, m => m.IsEdgeState);
            Assert.Equal(0, result.Chain!.Winding);
            Assert.Null(result.Chain.DecayLengthCells);
        }
    }

    [Fact]
    public void EdgeStateDecaysOverOneOverLnJ2OverJ1Cells()
    {
        // The zero mode of the semi-infinite chain lives on sublattice A with ψ(A, n) ∝ (−J₁/J₂)ⁿ (Su–Schrieffer–Heeger;
        // J. K. Asbóth, L. Oroszlány, A. Pályi, A Short Course on Topological Insulators, Springer 2016, ch. 1, recalled from
        // memory): decay length 1/ln(J₂/J₁) unit cells. With 20 cells the far end's state (on sublattice B) adds weights of order
        // (J₁/J₂)^(2(19 − n)) relative: below 1e-6 on the first four cells.
        double j1 = 50, j2 = 100;
        var result = Solve(Chain(40, j1, j2));
        Assert.Equal(1 / Math.Log(2), result.Chain!.DecayLengthCells!.Value, 12);
        var edge = result.Modes.Where(m => m.IsEdgeState).First();
        for (int n = 0; n < 4; n++)
        {
            Assert.Equal(Math.Pow(j1 / j2, 2), edge.Weights[2 * n + 2] / edge.Weights[2 * n], 1e-4);
            Assert.True(edge.Weights[2 * n + 1] < 1e-6 * edge.Weights[2 * n], $"the left edge state has no weight on sublattice B: {string.Join(", ", edge.Weights.Take(8).Select(w => w.ToString("G3")))}");
        }
    }

    [Fact]
    public void PeriodicChainFillsBandsBetweenItsEdges()
    {
        // Bloch bands E(k) = ±|J₁ + J₂e^{ik}| (Su–Schrieffer–Heeger 1979): edges ||J₁| − |J₂|| at k = π and |J₁| + |J₂| at
        // k = 0, both allowed momenta of a ring of 20 cells.
        double j1 = 70, j2 = 110;
        var result = Solve(Chain(40, j1, j2, "  boundary: periodic"));
        var e = result.Modes.Select(m => Math.Abs(m.FrequencyHz)).ToArray();
        Assert.Equal((j1 + j2) * 1e6, e.Max(), 1e-6);
        Assert.Equal((j2 - j1) * 1e6, e.Min(), 1e-6);
        Assert.Equal((j2 - j1) * 1e6, result.Chain!.GapEdgeHz, 1e-6);
        Assert.Equal((j1 + j2) * 1e6, result.Chain.OuterEdgeHz, 1e-6);
        // A ring has no boundary: nothing is an edge state, and the analysis says why.
        Assert.DoesNotContain(result.Modes, m => m.IsEdgeState);
        Assert.NotEmpty(result.Warnings);
    }

    [Theory]
    [InlineData(0.5, 1, 1.0)]
    [InlineData(2.0, 0, 0.0)]
    [InlineData(-0.5, 1, 1.0)]
    public void ZakPhaseIsPiTimesTheWindingNumber(double ratio, int winding, double zakOverPi)
    {
        // Zak phase of the lower band, π·W with the intra-cell bond inside the unit cell (J. Zak, Phys. Rev. Lett. 62, 2747
        // (1989); the winding-number form in Asbóth, Oroszlány, Pályi 2016, ch. 1, recalled from memory).
        var t = ModesAnalysis.Topology(ratio * 1e8, 1e8);
        Assert.Equal(winding, t.Winding);
        Assert.Equal(zakOverPi * Math.PI, t.ZakPhaseRad, 9);
    }

    [Fact]
    public void TotalLinewidthIsTheTraceOfTheNonHermitianHamiltonian()
    {
        // Σ_k (ν_k − iΓ_k/2) = Tr H_eff, so Σ_k Γ_k = Σ_j κ_j and Σ_k ν_k = Σ_j (f_j − f_ref) exactly (trace invariance).
        var s = Chain(20, 80, 120, "  disorder: { frequency: 3 MHz, linewidth: 200 kHz, seed: 2 }");
        var result = Solve(s);
        double kappa = s.Modes.Where(m => m.Kind == ModeKind.Cavity).Sum(m => m.LinewidthHz);
        double offsets = s.Modes.Where(m => m.Kind == ModeKind.Cavity).Sum(m => m.FrequencyHz - 6e9);
        Assert.Equal(kappa, result.Modes.Sum(m => m.LinewidthHz), 1e-6 * kappa);
        Assert.Equal(offsets, result.Modes.Sum(m => m.FrequencyHz), 1e-3);
        Assert.All(result.Modes, m => Assert.Equal(1, m.Weights.Sum(), 12));
    }

    [Fact]
    public void ZigzagTriangleHasOneZeroModePerUnpairedSite()
    {
        // A bipartite graph has at least |N_A − N_B| zero modes, all on the majority sublattice (E. H. Lieb, Phys. Rev. Lett.
        // 62, 1201 (1989)); the zigzag triangle of three plaquettes per side (triangulene) has N_A − N_B = 2 and exactly
        // two (W. L. Wang, S. Meng, E. Kaxiras, Nano Lett. 8, 241 (2008), recalled from memory).
        var s = LatticeLoaderTests.Load(LatticeLoaderTests.Honeycomb("shape: triangle\n  size: 3"));
        var result = Solve(s);
        var zero = result.Modes.Where(m => Math.Abs(m.FrequencyHz) < 1e-6 * 100e6).ToArray();
        Assert.Equal(2, zero.Length);
        int majority = s.Lattice!.Sites.GroupBy(x => x.Sublattice).OrderByDescending(g => g.Count()).First().Key;
        foreach (var m in zero)
            Assert.True(s.Lattice.Sites.Where(x => x.Sublattice == majority).Sum(x => m.Weights[x.Index]) > 1 - 1e-9);
    }

    [Fact]
    public void ZigzagEdgesCarryNearZeroStatesAndArmchairEdgesDoNot()
    {
        // Fujita et al., J. Phys. Soc. Jpn. 65, 1920 (1996) and Nakada et al., Phys. Rev. B 54, 17954 (1996): zigzag edges
        // carry states at E ≈ 0 localised on the edge sites of one sublattice, armchair edges none. In a rectangle with
        // zigzag top and bottom and armchair sides, the states near E = 0 sit on the zigzag edges, not the armchair ones;
        // a flake with armchair edges all round has no state near E = 0 at all.
        double t = 100e6;
        var rect = LatticeLoaderTests.Load(LatticeLoaderTests.Honeycomb("shape: rectangle\n  size: 9\n  rows: 3"));
        var r = Solve(rect);
        var sites = rect.Lattice!.Sites;
        double zigzagShare = sites.Count(x => x.Edge == EdgeKind.Zigzag) / (double)sites.Length;
        double armchairShare = sites.Count(x => x.Edge == EdgeKind.Armchair) / (double)sites.Length;
        var near = r.Modes.Where(m => Math.Abs(m.FrequencyHz) < 0.1 * t).ToArray();
        Assert.True(near.Length >= 2, $"{near.Length} states within 0.1 t of zero");
        foreach (var m in near)
        {
            double zigzag = sites.Where(x => x.Edge == EdgeKind.Zigzag).Sum(x => m.Weights[x.Index]);
            double armchair = sites.Where(x => x.Edge == EdgeKind.Armchair).Sum(x => m.Weights[x.Index]);
            Assert.True(zigzag > 2 * zigzagShare, $"mode {m.Index}: zigzag weight {zigzag:F3}, share {zigzagShare:F3}");
            Assert.True(armchair < armchairShare, $"mode {m.Index}: armchair weight {armchair:F3}, share {armchairShare:F3}");
        }
        var armchairFlake = Solve(LatticeLoaderTests.Load(LatticeLoaderTests.Honeycomb("shape: hexagon\n  size: 2\n  edges: armchair")));
        Assert.DoesNotContain(armchairFlake.Modes, m => Math.Abs(m.FrequencyHz) < 0.1 * t);
    }
}

using System.Collections.Immutable;

namespace Decohere.Scenarios;

/// <summary>How a lattice was generated.</summary>
public enum LatticeKind { Chain, Honeycomb, Explicit }

/// <summary>Which edge a boundary site lies on (honeycomb flakes); chains call their end sites <see cref="Other"/>.</summary>
public enum EdgeKind { Bulk, Zigzag, Armchair, Other }

/// <summary>Nearest-neighbour or next-nearest-neighbour bond.</summary>
public enum BondKind { Nearest, NextNearest }

/// <summary>
/// One cell of a lattice: a cavity and its drum, at a position in the plane (in units of the bond length).
/// <see cref="Sublattice"/> is 0 or 1 on bipartite lattices (A and B of the chain's unit cell, of graphene), else 0.
/// </summary>
public sealed record LatticeSite(int Index, double X, double Y, int Sublattice, string Cavity, string Drum, EdgeKind Edge, double G0Hz)
{
    /// <summary>True for a site on the boundary (fewer neighbours than in the bulk).</summary>
    public bool IsBoundary => Edge != EdgeKind.Bulk;
}

/// <summary>A hopping bond between two sites; its rate is the beam-splitter coupling of the two cavities in <see cref="Scenario.Couplings"/>.</summary>
public sealed record LatticeBond(int A, int B, BondKind Kind, int Direction);

/// <summary>A tone on one collective mode of the cavity network (index in order of increasing frequency), with the photon number in that mode.</summary>
public sealed record CollectiveTone(int ModeIndex, Sideband Sideband, double Photons);

/// <summary>
/// The geometry of a lattice scenario, kept beside the ordinary modes and couplings it expanded to (the engine sees only
/// those). Cavity frequencies, linewidths and hopping rates are read from the scenario's modes and couplings, so a
/// modified copy of the scenario (a sweep, a fit) stays consistent; the geometry, g₀ and the frames do not change.
/// </summary>
/// <param name="Kind">How the lattice was generated.</param>
/// <param name="Periodic">True for a chain closed into a ring.</param>
/// <param name="Sites">The cells in order.</param>
/// <param name="Bonds">Every hopping bond.</param>
/// <param name="CavityReferenceHz">The bare cavity frequency: collective frequencies are offsets from it.</param>
/// <param name="DrumReferenceHz">The drum frequency the tones are placed against (the mean of the drums' frequencies).</param>
/// <param name="Drives">Per stage name, the collective mode its tone drives.</param>
/// <param name="Shape">Short description of the geometry (for summaries).</param>
public sealed record Lattice(
    LatticeKind Kind,
    bool Periodic,
    ImmutableArray<LatticeSite> Sites,
    ImmutableArray<LatticeBond> Bonds,
    double CavityReferenceHz,
    double DrumReferenceHz,
    ImmutableDictionary<string, CollectiveTone> Drives,
    string Shape)
{
    /// <summary>Most sites of a lattice: two modes per site, and a scenario has at most 500 modes.</summary>
    public const int MaxSites = 250;

    /// <summary>Number of sites.</summary>
    public int Count => Sites.Length;

    /// <summary>
    /// The non-Hermitian cavity Hamiltonian in Hz, H_eff = H − iK/2 (offsets from <see cref="CavityReferenceHz"/> on the
    /// diagonal, hopping rates off it, K the cavity linewidths), built from the scenario's modes and couplings.
    /// </summary>
    public (double[,] Hermitian, double[] LinewidthsHz) Hamiltonian(Scenario scenario) => Hamiltonian(scenario.Modes, scenario.Couplings);

    /// <summary>The same from modes and couplings (while a scenario is being loaded).</summary>
    public (double[,] Hermitian, double[] LinewidthsHz) Hamiltonian(IEnumerable<Mode> modes, IEnumerable<StaticCoupling> couplings)
    {
        var byName = modes.ToDictionary(m => m.Name);
        int n = Count;
        var h = new double[n, n];
        var widths = new double[n];
        var index = Sites.ToDictionary(s => s.Cavity, s => s.Index);
        foreach (var site in Sites)
        {
            var mode = byName[site.Cavity];
            h[site.Index, site.Index] = mode.FrequencyHz - CavityReferenceHz;
            widths[site.Index] = mode.LinewidthHz;
        }
        foreach (var c in couplings)
        {
            if (c.Kind != CouplingKind.BeamSplitter || !index.TryGetValue(c.ModeA, out int a) || !index.TryGetValue(c.ModeB, out int b)) continue;
            h[a, b] += c.RateHz;
            h[b, a] += c.RateHz;
        }
        return (h, widths);
    }
}

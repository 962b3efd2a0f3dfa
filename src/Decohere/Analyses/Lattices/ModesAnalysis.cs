using System.Collections.Immutable;
using System.Diagnostics;
using System.Numerics;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Lattices;

/// <summary>Settings of the collective-mode analysis.</summary>
public sealed record ModesSettings
{
    /// <summary>
    /// A mode is called an edge state when its weight on the boundary sites is at least this many times the boundary
    /// sites' share of all sites (the weight a mode spread evenly would put there). Default 2.5.
    /// </summary>
    public double EdgeEnrichment { get; init; } = 2.5;
}

/// <summary>One collective mode with its localisation measures.</summary>
/// <param name="Index">Position in order of increasing frequency.</param>
/// <param name="FrequencyHz">Offset from the bare cavity frequency.</param>
/// <param name="LinewidthHz">Energy decay rate / 2π of the mode (from the non-Hermitian problem).</param>
/// <param name="Weights">|ψ(j)|² per site, summing to 1.</param>
/// <param name="EdgeWeight">Σ of <paramref name="Weights"/> over the boundary sites.</param>
/// <param name="InverseParticipation">Σ_j |ψ(j)|⁴: 1/N for a mode spread evenly over N sites, 1 for a mode on one site.</param>
/// <param name="IsEdgeState">Whether the edge weight passes <see cref="ModesSettings.EdgeEnrichment"/>.</param>
public sealed record LatticeMode(int Index, double FrequencyHz, double LinewidthHz, ImmutableArray<double> Weights, double EdgeWeight,
    double InverseParticipation, bool IsEdgeState);

/// <summary>
/// Bulk topology of a two-site chain with hopping J₁ inside and J₂ between cells: the winding number of
/// h(k) = J₁ + J₂e^{−ik} about the origin and the Zak phase of the lower band (J. Zak, Phys. Rev. Lett. 62, 2747 (1989)),
/// π for |J₁| &lt; |J₂| with this unit cell, and the band edges.
/// </summary>
/// <param name="IntraHz">J₁, the mean of the bonds inside the unit cells.</param>
/// <param name="InterHz">J₂, the mean of the bonds between cells.</param>
/// <param name="Winding">Winding number of h(k).</param>
/// <param name="ZakPhaseRad">Berry phase of the lower band across the Brillouin zone, in [0, 2π), from a discrete Wilson loop.</param>
/// <param name="GapEdgeHz">|J₁| − |J₂| in magnitude: the inner band edge ||J₁| − |J₂||.</param>
/// <param name="OuterEdgeHz">|J₁| + |J₂|, the outer band edge.</param>
/// <param name="DecayLengthCells">Edge-state decay length of |ψ| in unit cells, 1/ln|J₂/J₁| (null in the trivial phase).</param>
public sealed record ChainTopology(double IntraHz, double InterHz, int Winding, double ZakPhaseRad, double GapEdgeHz, double OuterEdgeHz, double? DecayLengthCells);

/// <summary>The collective modes of a lattice scenario's cavity network.</summary>
public sealed record ModesResult(
    Scenario Scenario,
    Lattice Lattice,
    ImmutableArray<LatticeMode> Modes,
    ChainTopology? Chain,
    double BoundaryShare,
    Provenance Provenance,
    ResultStatus Status,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult;

/// <summary>
/// Collective modes of the cavity network (eigenvalues and right eigenvectors of H_eff = H − iK/2), their edge weight
/// and inverse participation ratio, and for a two-site chain the bulk winding number and Zak phase.
/// </summary>
public static class ModesAnalysis
{
    /// <summary>Solves the network's eigenproblem.</summary>
    /// <exception cref="InputException">The scenario has no lattice.</exception>
    public static ModesResult Solve(Scenario scenario, ModesSettings settings) => Solve(scenario, settings, null);

    // Callers that need the amplitudes as well solve the eigenproblem once and pass its modes in.
    internal static ModesResult Solve(Scenario scenario, ModesSettings settings, ImmutableArray<CollectiveMode>? solved)
    {
        long start = Stopwatch.GetTimestamp();
        var lattice = Require(scenario);
        if (!(settings.EdgeEnrichment > 1) || !double.IsFinite(settings.EdgeEnrichment))
            throw new InputException($"edge enrichment must be a finite number above 1, got {settings.EdgeEnrichment}");
        var modes = solved ?? LatticeModes.Solve(scenario, lattice);
        int n = lattice.Count;
        int boundary = lattice.Sites.Count(s => s.IsBoundary);
        double share = (double)boundary / n;
        var warnings = new List<string>();
        if (boundary == 0) warnings.Add("the lattice has no boundary sites (a ring or a closed graph): no mode is called an edge state");
        else if (settings.EdgeEnrichment * share >= 1)
            warnings.Add($"{boundary} of {n} sites are on the boundary, so no mode can put {settings.EdgeEnrichment:G3}× their share there: edge states are not flagged (use a larger lattice)");
        var result = modes.Select((m, k) =>
        {
            var w = Enumerable.Range(0, n).Select(m.Weight).ToImmutableArray();
            double edge = lattice.Sites.Where(s => s.IsBoundary).Sum(s => w[s.Index]);
            double ipr = w.Sum(x => x * x);
            return new LatticeMode(k, m.FrequencyHz, m.LinewidthHz, w, edge, ipr, boundary > 0 && edge >= settings.EdgeEnrichment * share);
        }).ToImmutableArray();
        // Two sites per unit cell: the Su–Schrieffer–Heeger chain.
        var nearest = lattice.Bonds.Where(b => b.Kind == BondKind.Nearest).ToArray();
        var chain = lattice.Kind == LatticeKind.Chain && nearest.Any(b => b.Direction == 1) && nearest.All(b => b.Direction <= 1)
            ? Topology(scenario, lattice) : null;
        var provenance = Provenance.For(scenario);
        return new ModesResult(scenario, lattice, result, chain, share, provenance, ResultStatuses.From(warnings), [.. warnings], WorkStatistics.Since(start));
    }

    /// <summary>The scenario's lattice, or an error in the library's words.</summary>
    public static Lattice Require(Scenario scenario) =>
        scenario.Lattice ?? throw new InputException($"scenario '{scenario.Name}' has no lattice: block; collective modes are computed for lattice scenarios");

    /// <summary>
    /// Winding number and Zak phase of the chain's mean bulk couplings. The Zak phase is the phase of the discrete
    /// Wilson loop Π_k ⟨u_k|u_{k+δ}⟩ of the lower band over the Brillouin zone (R. Resta, Rev. Mod. Phys. 66, 899 (1994)),
    /// gauge invariant for any phase choice of the eigenvectors; the periodic gauge u_{2π} = u_0 closes the loop.
    /// </summary>
    public static ChainTopology Topology(double j1, double j2, int points = 256)
    {
        // Winding of h(k) = J₁ + J₂e^{−ik}: once around the origin exactly when |J₂| > |J₁|.
        int winding = Math.Abs(j2) > Math.Abs(j1) ? 1 : 0;
        Complex loop = Complex.One;
        Complex[] first = Lower(j1, j2, 0), previous = first;
        for (int i = 1; i <= points; i++)
        {
            var u = i == points ? first : Lower(j1, j2, 2 * Math.PI * i / points);
            loop *= Complex.Conjugate(previous[0]) * u[0] + Complex.Conjugate(previous[1]) * u[1];
            previous = u;
        }
        double zak = -loop.Phase;
        zak = ((zak % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI);
        if (2 * Math.PI - zak < 1e-9) zak = 0;
        double? decay = Math.Abs(j2) > Math.Abs(j1) && j1 != 0 ? 1 / Math.Log(Math.Abs(j2 / j1)) : null;
        return new ChainTopology(j1, j2, winding, zak, Math.Abs(Math.Abs(j1) - Math.Abs(j2)), Math.Abs(j1) + Math.Abs(j2), decay);
    }

    private static ChainTopology Topology(Scenario scenario, Lattice lattice)
    {
        var nearest = lattice.Bonds.Select((b, i) => (b, rate: scenario.Couplings[i].RateHz)).Where(p => p.b.Kind == BondKind.Nearest).ToArray();
        double j1 = nearest.Where(p => p.b.Direction == 0).Select(p => p.rate).DefaultIfEmpty(0).Average();
        double j2 = nearest.Where(p => p.b.Direction == 1).Select(p => p.rate).DefaultIfEmpty(0).Average();
        return Topology(j1, j2);
    }

    // Lower-band eigenvector of the Bloch Hamiltonian [[0, h], [h*, 0]], h = J₁ + J₂e^{−ik}: (1, −e^{−iφ})/√2, φ = arg h,
    // written in the periodic gauge (continuous in k, equal at 0 and 2π), so the loop's phase is the Berry phase.
    private static Complex[] Lower(double j1, double j2, double k)
    {
        var h = j1 + j2 * Complex.Exp(-Complex.ImaginaryOne * k);
        double s = 1 / Math.Sqrt(2);
        return [s, -s * Complex.Exp(-Complex.ImaginaryOne * h.Phase)];
    }
}

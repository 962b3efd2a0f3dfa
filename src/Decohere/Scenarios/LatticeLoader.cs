using System.Collections.Immutable;
using System.Globalization;
using YamlDotNet.RepresentationModel;
using Decohere.Core;
using Decohere.Numerics;

namespace Decohere.Scenarios;

/// <summary>
/// Reads a scenario's <c>lattice:</c> block and expands it into ordinary modes (a cavity <c>cavity_j</c> and a drum
/// <c>drum_j</c> per site) and beam-splitter couplings between cavities, so the engine sees nothing new. A stage tone
/// <c>{ collective: k, sideband: red, photons: N }</c> drives collective mode k of the cavity network: it expands to one
/// tone per cell with G_j = g₀,j·√N·|ψ_k(j)| (the drive's field in cell j is √N·ψ_k(j); the phase of ψ_k(j) is absorbed
/// into drum j, which nothing else touches), and the stage's frame rotates the cavities at the driven mode's frequency
/// and the drums at <see cref="Lattice.DrumReferenceHz"/>, so every cell's offset becomes a static detuning.
/// </summary>
public static class LatticeLoader
{
    // The scenario loader's bound on mode frequencies.
    private const double MaxFrequencyHz = 1e16;

    private static readonly string[] Keys =
        ["kind", "sites", "couplings", "boundary", "next_nearest", "shape", "size", "rows", "edges", "positions", "bonds", "cavity", "drum", "disorder", "cells"];

    /// <summary>The name of site j's cavity.</summary>
    public static string CavityName(int j) => $"cavity_{j}";

    /// <summary>The name of site j's drum.</summary>
    public static string DrumName(int j) => $"drum_{j}";

    internal sealed record Expansion(Lattice Lattice, ImmutableArray<Mode> Modes, ImmutableArray<StaticCoupling> Couplings);

    /// <summary>Reads the block; null when it has problems (all reported).</summary>
    /// <param name="r">The scenario's reader.</param>
    /// <param name="node">The <c>lattice</c> node.</param>
    /// <param name="bathOf">The scenario loader's bath reader (temperature or occupancy at a frequency).</param>
    internal static Expansion? Read(YamlReader r, YamlNode node, Func<YamlNode?, string, double?, Bath?> bathOf)
    {
        const string path = "lattice";
        var m = r.Mapping(node, path, Keys);
        if (m is null) return null;
        int before = r.Problems.Count;
        var kind = r.Enum(r.Required(m, path, "kind", "chain | honeycomb | explicit"), path + ".kind",
            ("chain", LatticeKind.Chain), ("honeycomb", LatticeKind.Honeycomb), ("explicit", LatticeKind.Explicit));
        if (kind is null) return null;
        string[] own = kind switch
        {
            LatticeKind.Chain => ["sites", "couplings", "boundary", "next_nearest"],
            LatticeKind.Honeycomb => ["shape", "size", "rows", "edges", "couplings", "next_nearest"],
            _ => ["positions", "bonds"],
        };
        string[] shared = ["kind", "cavity", "drum", "disorder", "cells"];
        foreach (var key in m.Children.Keys.OfType<YamlScalarNode>())
            if (Keys.Contains(key.Value) && !own.Contains(key.Value) && !shared.Contains(key.Value))
                r.Report($"{path}.{key.Value}", key, $"'{key.Value}' does not apply to kind {KindName(kind.Value)}; its keys: {string.Join(", ", own.Concat(shared.Skip(1)))}");

        var (graph, rates, nextRate, periodic, shape) = kind switch
        {
            LatticeKind.Chain => Chain(r, m, path),
            LatticeKind.Honeycomb => Honeycomb(r, m, path),
            _ => Explicit(r, m, path),
        };
        var cells = Cells(r, m, path, bathOf);
        int n = graph?.Sites.Count ?? 0;
        if (n > Lattice.MaxSites)
            r.Report(path, m, $"{n} sites make {2 * n} modes; at most {Lattice.MaxSites} sites ({2 * Lattice.MaxSites} modes: the engine's dense matrices cost the cube of the mode count)");
        foreach (var (index, key) in cells.Keys)
            if (graph is not null && index >= n) r.Report($"{path}.cells.{index}", key, $"site {index} does not exist; the lattice has sites 0 to {n - 1}");

        var cavityMap = r.Mapping(r.Required(m, path, "cavity", "{ frequency, linewidth, bath }"), path + ".cavity", "frequency", "linewidth", "bath");
        double? f0 = r.Number(r.Required(cavityMap, path + ".cavity", "frequency", "e.g. 6 GHz"), path + ".cavity.frequency", Dimension.Frequency, 0, minExclusive: true, max: MaxFrequencyHz);
        double? kappa = r.Number(r.Required(cavityMap, path + ".cavity", "linewidth", "e.g. 1 MHz"), path + ".cavity.linewidth", Dimension.Frequency, 0, minExclusive: true);
        var cavityBathNode = YamlReader.Get(cavityMap, "bath");
        Bath? cavityBath = cavityBathNode is null ? new Bath(0) : bathOf(cavityBathNode, path + ".cavity.bath", f0);

        var drumMap = r.Mapping(r.Required(m, path, "drum", "{ frequency, spacing, linewidth, bath, g0 }"), path + ".drum", "frequency", "spacing", "linewidth", "bath", "g0");
        double? fm = r.Number(r.Required(drumMap, path + ".drum", "frequency", "e.g. 5 MHz"), path + ".drum.frequency", Dimension.Frequency, 0, minExclusive: true, max: MaxFrequencyHz);
        double spacing = r.Number(YamlReader.Get(drumMap, "spacing"), path + ".drum.spacing", Dimension.Frequency) ?? 0;
        double? gamma = r.Number(r.Required(drumMap, path + ".drum", "linewidth", "e.g. 1 Hz"), path + ".drum.linewidth", Dimension.Frequency, 0, minExclusive: true);
        var drumBathNode = r.Required(drumMap, path + ".drum", "bath", "{ temperature: 15 mK } or { occupancy: 320 }");
        double? g0 = r.Number(r.Required(drumMap, path + ".drum", "g0", "single-photon coupling, e.g. 20 Hz"), path + ".drum.g0", Dimension.Frequency, 0);

        var disorderMap = r.Mapping(YamlReader.Get(m, "disorder"), path + ".disorder", "frequency", "linewidth", "coupling", "seed");
        double sigmaF = r.Number(YamlReader.Get(disorderMap, "frequency"), path + ".disorder.frequency", Dimension.Frequency, 0) ?? 0;
        double sigmaK = r.Number(YamlReader.Get(disorderMap, "linewidth"), path + ".disorder.linewidth", Dimension.Frequency, 0) ?? 0;
        double sigmaJ = r.Number(YamlReader.Get(disorderMap, "coupling"), path + ".disorder.coupling", Dimension.Frequency, 0) ?? 0;
        long seed = r.Integer(YamlReader.Get(disorderMap, "seed"), path + ".disorder.seed", 0) ?? 1;
        if (fm is not null && bathOf(drumBathNode, path + ".drum.bath", fm) is null) return null;
        if (r.Problems.Count > before || graph is null || f0 is null || kappa is null || cavityBath is null || fm is null || gamma is null || g0 is null) return null;

        // One stream per disordered quantity, so changing one σ does not redraw the others.
        var frequencyDraws = RandomStream.For(seed, SeedStream.LatticeDisorder, 0);
        var linewidthDraws = RandomStream.For(seed, SeedStream.LatticeDisorder, 1);
        var couplingDraws = RandomStream.For(seed, SeedStream.LatticeDisorder, 2);
        var modes = ImmutableArray.CreateBuilder<Mode>(2 * n);
        var sites = ImmutableArray.CreateBuilder<LatticeSite>(n);
        var drumFrequencies = new double[n];
        for (int j = 0; j < n; j++)
        {
            double f = f0.Value + sigmaF * frequencyDraws.NextNormal();
            double k = kappa.Value + sigmaK * linewidthDraws.NextNormal();
            cells.Values.TryGetValue(j, out var cell);
            string at = cell is null ? $"{path}.disorder.linewidth" : $"{path}.cells.{j}";
            f = cell?.CavityFrequencyHz ?? f;
            k = cell?.CavityLinewidthHz ?? k;
            if (k <= 0)
            {
                r.Report(at, YamlReader.Get(disorderMap, "linewidth") ?? m, $"site {j}'s cavity linewidth came out {k:G4} Hz; it must be positive (lower the linewidth disorder σ)");
                continue;
            }
            if (f <= 0)
            {
                r.Report(path + ".disorder.frequency", YamlReader.Get(disorderMap, "frequency") ?? m, $"site {j}'s cavity frequency came out {f:G4} Hz; it must be positive");
                continue;
            }
            double fmj = cell?.DrumFrequencyHz ?? fm.Value + j * spacing;
            if (fmj <= 0)
            {
                r.Report(path + ".drum.spacing", YamlReader.Get(drumMap, "spacing"), $"site {j}'s drum frequency came out {fmj:G4} Hz; it must be positive");
                continue;
            }
            drumFrequencies[j] = fmj;
            var drumBath = cell?.DrumBath is { } db ? bathOf(db, $"{path}.cells.{j}.drum.bath", fmj) : bathOf(drumBathNode, path + ".drum.bath", fmj);
            var ownBath = cell?.CavityBath is { } cb ? bathOf(cb, $"{path}.cells.{j}.cavity.bath", f) : cavityBath;
            if (drumBath is null || ownBath is null) return null;
            modes.Add(new Mode(CavityName(j), ModeKind.Cavity, f, k, ownBath));
            modes.Add(new Mode(DrumName(j), ModeKind.Mechanical, fmj, cell?.DrumLinewidthHz ?? gamma.Value, drumBath));
            var (x, y, sub) = graph.Sites[j];
            sites.Add(new LatticeSite(j, x, y, sub, CavityName(j), DrumName(j), graph.Edges[j], cell?.G0Hz ?? g0.Value));
        }
        if (r.Problems.Count > before) return null;

        var couplings = ImmutableArray.CreateBuilder<StaticCoupling>(graph.Bonds.Count);
        foreach (var bond in graph.Bonds)
        {
            // An explicit bond's direction is its own index in the list; generated next-nearest bonds share one rate.
            double rate = kind == LatticeKind.Explicit ? rates[bond.Direction]
                : (bond.Kind == BondKind.NextNearest ? nextRate : rates[bond.Direction % rates.Length]) + sigmaJ * couplingDraws.NextNormal();
            couplings.Add(new StaticCoupling(CavityName(bond.A), CavityName(bond.B), CouplingKind.BeamSplitter, rate));
        }
        var lattice = new Lattice(kind.Value, periodic, sites.MoveToImmutable(), [.. graph.Bonds], f0.Value, drumFrequencies.Average(),
            ImmutableDictionary<string, CollectiveTone>.Empty, shape);
        return new Expansion(lattice, modes.MoveToImmutable(), couplings.MoveToImmutable());
    }

    private static string KindName(LatticeKind k) => k.ToString().ToLowerInvariant();

    private static (LatticeGeometry.Graph?, double[], double, bool, string) Chain(YamlReader r, YamlMappingNode m, string path)
    {
        long? n = r.Integer(r.Required(m, path, "sites", "number of sites, e.g. 10"), path + ".sites", 2, Lattice.MaxSites);
        var rates = Rates(r, m, path, 1, 8);
        bool periodic = r.Enum(YamlReader.Get(m, "boundary"), path + ".boundary", ("open", false), ("periodic", true)) ?? false;
        double? next = r.Number(YamlReader.Get(m, "next_nearest"), path + ".next_nearest", Dimension.Frequency);
        if (n is null || rates is null) return (null, [], 0, periodic, "");
        if (periodic && n % rates.Length != 0)
            r.Report(path + ".sites", YamlReader.Get(m, "sites"), $"a periodic chain needs a whole number of unit cells: {n} sites with {rates.Length} couplings per cell");
        var graph = LatticeGeometry.Chain((int)n, rates.Length, periodic, next is not null);
        return (graph, rates, next ?? 0, periodic, $"{(periodic ? "ring" : "open chain")} of {n} sites, {rates.Length} per unit cell");
    }

    private static (LatticeGeometry.Graph?, double[], double, bool, string) Honeycomb(YamlReader r, YamlMappingNode m, string path)
    {
        var shape = r.Enum(r.Required(m, path, "shape", "hexagon | triangle | rectangle"), path + ".shape",
            ("hexagon", FlakeShape.Hexagon), ("triangle", FlakeShape.Triangle), ("rectangle", FlakeShape.Rectangle));
        long? size = r.Integer(r.Required(m, path, "size", "plaquettes along an edge"), path + ".size", 1, 20);
        long rows = 0;
        var rowsNode = YamlReader.Get(m, "rows");
        if (shape == FlakeShape.Rectangle) rows = r.Integer(r.Required(m, path, "rows", "rows of plaquettes"), path + ".rows", 1, 40) ?? 0;
        else if (rowsNode is not null) r.Report(path + ".rows", rowsNode, "rows applies to shape: rectangle (its zigzag edges run along the rows)");
        var edgesNode = YamlReader.Get(m, "edges");
        bool armchair = r.Enum(edgesNode, path + ".edges", ("zigzag", false), ("armchair", true)) ?? false;
        if (edgesNode is not null && shape != FlakeShape.Hexagon)
            r.Report(path + ".edges", edgesNode, "edges applies to shape: hexagon (a triangle has zigzag edges; a rectangle zigzag along its rows and armchair along its sides)");
        var rates = Rates(r, m, path, 1, 3);
        if (rates is not null && rates.Length == 2)
        {
            r.Report(path + ".couplings", YamlReader.Get(m, "couplings"), "give one coupling, or three (one per bond orientation: vertical, down-left, down-right)");
            rates = null;
        }
        double? next = r.Number(YamlReader.Get(m, "next_nearest"), path + ".next_nearest", Dimension.Frequency);
        if (shape is null || size is null || rates is null || (shape == FlakeShape.Rectangle && rows == 0)) return (null, [], 0, false, "");
        var graph = LatticeGeometry.Honeycomb(shape.Value, (int)size, (int)rows, armchair, next is not null);
        string outline = shape switch
        {
            FlakeShape.Hexagon => $"{(armchair ? "armchair" : "zigzag")} hexagon of size {size}",
            FlakeShape.Triangle => $"zigzag triangle of size {size}",
            _ => $"rectangle of {size}×{rows} plaquettes (zigzag top and bottom, armchair sides)",
        };
        return (graph, rates, next ?? 0, false, $"honeycomb {outline}, {graph.Sites.Count} sites");
    }

    private static (LatticeGeometry.Graph?, double[], double, bool, string) Explicit(YamlReader r, YamlMappingNode m, string path)
    {
        var seq = r.Sequence(r.Required(m, path, "positions", "list of [x, y] per site"), path + ".positions");
        var positions = new List<(double, double)>();
        for (int i = 0; seq is not null && i < seq.Children.Count; i++)
        {
            string p = $"{path}.positions[{i}]";
            var xy = r.Sequence(seq.Children[i], p);
            if (xy is null) continue;
            if (xy.Children.Count != 2) { r.Report(p, xy, $"expected [x, y], got {xy.Children.Count} numbers"); continue; }
            double? x = r.Number(xy.Children[0], p + "[0]", Dimension.Dimensionless), y = r.Number(xy.Children[1], p + "[1]", Dimension.Dimensionless);
            if (x is not null && y is not null) positions.Add((x.Value, y.Value));
        }
        if (seq is not null && seq.Children.Count < 2) r.Report(path + ".positions", seq, "a lattice needs at least two sites");
        int n = seq?.Children.Count ?? 0;
        if (n > Lattice.MaxSites) return (null, [], 0, false, "");
        var bondSeq = r.Sequence(r.Required(m, path, "bonds", "list of { sites: [i, j], rate: 80 MHz }"), path + ".bonds");
        var bonds = new List<LatticeBond>();
        var rates = new List<double>();
        var seen = new HashSet<(int, int)>();
        for (int i = 0; bondSeq is not null && i < bondSeq.Children.Count; i++)
        {
            string p = $"{path}.bonds[{i}]";
            var b = r.Mapping(bondSeq.Children[i], p, "sites", "rate", "kind");
            if (b is null) continue;
            var pair = r.Sequence(r.Required(b, p, "sites", "two site indices, e.g. [0, 1]"), p + ".sites");
            double? rate = r.Number(r.Required(b, p, "rate", "a frequency, e.g. 80 MHz"), p + ".rate", Dimension.Frequency);
            var bondKind = r.Enum(YamlReader.Get(b, "kind"), p + ".kind", ("nearest", BondKind.Nearest), ("next-nearest", BondKind.NextNearest)) ?? BondKind.Nearest;
            if (pair is null) continue;
            if (pair.Children.Count != 2) { r.Report(p + ".sites", pair, $"expected two site indices, got {pair.Children.Count}"); continue; }
            long? a = r.Integer(pair.Children[0], p + ".sites[0]", 0, Math.Max(n - 1, 0)), c = r.Integer(pair.Children[1], p + ".sites[1]", 0, Math.Max(n - 1, 0));
            if (a is null || c is null || rate is null) continue;
            if (a == c) { r.Report(p + ".sites", pair, "a bond joins two different sites"); continue; }
            if (!seen.Add(((int)Math.Min(a.Value, c.Value), (int)Math.Max(a.Value, c.Value)))) { r.Report(p + ".sites", pair, $"sites {a} and {c} are already bonded"); continue; }
            bonds.Add(new LatticeBond((int)a, (int)c, bondKind, rates.Count));
            rates.Add(rate.Value);
        }
        if (positions.Count != n || n < 2) return (null, [], 0, false, "");
        return (LatticeGeometry.Explicit(positions, bonds), [.. rates], 0, false, $"{n} sites, {bonds.Count} bonds given one by one");
    }

    private static double[]? Rates(YamlReader r, YamlMappingNode m, string path, int min, int max)
    {
        var seq = r.Sequence(r.Required(m, path, "couplings", "hopping rates, e.g. [80 MHz, 120 MHz]"), path + ".couplings");
        if (seq is null) return null;
        if (seq.Children.Count < min || seq.Children.Count > max)
        {
            r.Report(path + ".couplings", seq, $"{seq.Children.Count} couplings; give {min} to {max}");
            return null;
        }
        var rates = seq.Children.Select((c, i) => r.Number(c, $"{path}.couplings[{i}]", Dimension.Frequency)).ToArray();
        return rates.All(x => x is not null) ? rates.Select(x => x!.Value).ToArray() : null;
    }

    // Baths are kept as nodes: a temperature is read at the cell's own frequency, known only once disorder is drawn.
    private sealed record Cell(double? CavityFrequencyHz, double? CavityLinewidthHz, YamlNode? CavityBath, double? DrumFrequencyHz, double? DrumLinewidthHz, YamlNode? DrumBath, double? G0Hz);

    private sealed record CellSet(Dictionary<int, Cell> Values, List<(int Index, YamlNode Key)> Keys);

    private static CellSet Cells(YamlReader r, YamlMappingNode m, string path, Func<YamlNode?, string, double?, Bath?> bathOf)
    {
        var result = new CellSet([], []);
        var map = r.NamedMapping(YamlReader.Get(m, "cells"), path + ".cells");
        foreach (var (name, key, value) in YamlReader.Entries(map))
        {
            string p = $"{path}.cells.{name}";
            if (!int.TryParse(name, NumberStyles.None, CultureInfo.InvariantCulture, out int index))
            {
                r.Report(p, key, $"'{YamlReader.Shorten(name)}' is not a site index (0, 1, 2, …)");
                continue;
            }
            result.Keys.Add((index, key));
            var cell = r.Mapping(value, p, "cavity", "drum");
            var cav = r.Mapping(YamlReader.Get(cell, "cavity"), p + ".cavity", "frequency", "linewidth", "bath");
            var drum = r.Mapping(YamlReader.Get(cell, "drum"), p + ".drum", "frequency", "linewidth", "bath", "g0");
            result.Values[index] = new Cell(
                r.Number(YamlReader.Get(cav, "frequency"), p + ".cavity.frequency", Dimension.Frequency, 0, minExclusive: true, max: MaxFrequencyHz),
                r.Number(YamlReader.Get(cav, "linewidth"), p + ".cavity.linewidth", Dimension.Frequency, 0, minExclusive: true),
                YamlReader.Get(cav, "bath"),
                r.Number(YamlReader.Get(drum, "frequency"), p + ".drum.frequency", Dimension.Frequency, 0, minExclusive: true, max: MaxFrequencyHz),
                r.Number(YamlReader.Get(drum, "linewidth"), p + ".drum.linewidth", Dimension.Frequency, 0, minExclusive: true),
                YamlReader.Get(drum, "bath"),
                r.Number(YamlReader.Get(drum, "g0"), p + ".drum.g0", Dimension.Frequency, 0));
        }
        return result;
    }

    /// <summary>True when a tone entry drives a collective mode (<c>collective: k</c>).</summary>
    internal static bool IsCollective(YamlNode node) => node is YamlMappingNode m && YamlReader.Has(m, "collective");

    /// <summary>Reads <c>{ collective: k, sideband: red | blue, photons: N }</c>.</summary>
    internal static CollectiveTone? Collective(YamlReader r, YamlNode node, string path, Lattice? lattice)
    {
        var m = r.Mapping(node, path, "collective", "sideband", "photons");
        if (m is null) return null;
        if (lattice is null)
        {
            r.Report(path + ".collective", YamlReader.Get(m, "collective"), "a collective tone drives a mode of a lattice; this scenario has no lattice: block");
            return null;
        }
        long? k = r.Integer(YamlReader.Get(m, "collective"), path + ".collective", 0, lattice.Count - 1);
        var sideband = r.Enum(r.Required(m, path, "sideband", "red | blue"), path + ".sideband", ("red", Sideband.Red), ("blue", Sideband.Blue));
        double? photons = r.Number(r.Required(m, path, "photons", "photons in the driven collective mode"), path + ".photons", Dimension.Dimensionless, 0);
        return k is null || sideband is null || photons is null ? null : new CollectiveTone((int)k, sideband.Value, photons.Value);
    }

    /// <summary>
    /// A stage of a lattice scenario in its frame: cavity j detuned by (f_j − f_ref) − ν_k, the driven mode's offset ν_k
    /// (0 without a collective tone), drum j by its offset from <see cref="Lattice.DrumReferenceHz"/> (the tone sits at
    /// ν_k ∓ that reference), plus the per-cell tones of the collective drive. Detunings the file gave are added.
    /// </summary>
    internal static Stage Frame(Lattice lattice, IReadOnlyList<Mode> modes, IReadOnlyList<StaticCoupling> couplings, Stage stage, CollectiveTone? drive,
        IReadOnlyList<CollectiveMode>? solved = null)
    {
        var byName = modes.ToDictionary(x => x.Name);
        var detunings = stage.DetuningsHz.ToBuilder();
        var tones = stage.Tones.ToBuilder();
        double nu = 0;
        CollectiveMode? driven = null;
        if (drive is not null)
        {
            if (solved is null)
            {
                var (h, widths) = lattice.Hamiltonian(modes, couplings);
                solved = LatticeModes.Solve(h, widths);
            }
            driven = solved[drive.ModeIndex];
            nu = driven.FrequencyHz;
        }
        foreach (var site in lattice.Sites)
        {
            detunings[site.Cavity] = detunings.GetValueOrDefault(site.Cavity) + (byName[site.Cavity].FrequencyHz - lattice.CavityReferenceHz - nu);
            detunings[site.Drum] = detunings.GetValueOrDefault(site.Drum) + (byName[site.Drum].FrequencyHz - lattice.DrumReferenceHz);
            if (driven is null) continue;
            double g = site.G0Hz * Math.Sqrt(drive!.Photons) * driven.Amplitudes[site.Index].Magnitude;
            if (g > 0) tones.Add(new Tone(site.Cavity, site.Drum, drive.Sideband, g, CouplingForm.SinglePhoton));
        }
        return stage with { DetuningsHz = detunings.ToImmutable(), Tones = tones.ToImmutable() };
    }
}

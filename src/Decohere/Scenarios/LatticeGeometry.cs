namespace Decohere.Scenarios;

/// <summary>Honeycomb flake outlines.</summary>
public enum FlakeShape { Hexagon, Triangle, Rectangle }

/// <summary>
/// Site positions, sublattices, bonds and edge types of the generated lattices. Lengths are in units of the bond length.
/// A bond's direction is its index in the lattice's list of couplings (the chain's position in the unit cell; the
/// honeycomb's bond orientation), so staggered couplings are one rate per direction.
/// </summary>
public static class LatticeGeometry
{
    /// <summary>Positions, sublattice and bonds of a generated lattice, before cavities and drums are attached.</summary>
    public sealed record Graph(IReadOnlyList<(double X, double Y, int Sublattice)> Sites, IReadOnlyList<LatticeBond> Bonds, IReadOnlyList<EdgeKind> Edges);

    /// <summary>
    /// A chain of <paramref name="sites"/> sites whose bond i → i+1 has direction i mod <paramref name="cellSize"/>
    /// (the Su–Schrieffer–Heeger chain for a cell of two); the closing bond of a ring continues the pattern.
    /// </summary>
    public static Graph Chain(int sites, int cellSize, bool periodic, bool nextNearest)
    {
        var positions = Enumerable.Range(0, sites).Select(i => ((double)i, 0.0, cellSize == 2 ? i % 2 : 0)).ToList();
        var bonds = new List<LatticeBond>();
        for (int i = 0; i + 1 < sites; i++) bonds.Add(new LatticeBond(i, i + 1, BondKind.Nearest, i % cellSize));
        if (periodic && sites > 2) bonds.Add(new LatticeBond(sites - 1, 0, BondKind.Nearest, (sites - 1) % cellSize));
        if (nextNearest)
        {
            for (int i = 0; i + 2 < sites; i++) bonds.Add(new LatticeBond(i, i + 2, BondKind.NextNearest, 0));
            if (periodic && sites > 4)
            {
                bonds.Add(new LatticeBond(sites - 2, 0, BondKind.NextNearest, 0));
                bonds.Add(new LatticeBond(sites - 1, 1, BondKind.NextNearest, 0));
            }
        }
        var edges = Enumerable.Range(0, sites).Select(i => !periodic && (i == 0 || i == sites - 1) ? EdgeKind.Other : EdgeKind.Bulk).ToList();
        return new Graph(positions, bonds, edges);
    }

    /// <summary>
    /// A honeycomb flake: the union of hexagonal plaquettes (vertices at 30° + 60°k, so rows of plaquettes run along x)
    /// whose centres lie in the outline. Rows along x end in zigzag edges, columns along y in armchair edges. The zigzag
    /// hexagon of size n has 6n² sites (n = 2: 24, the coronene graph), the armchair hexagon of size 2 has 42
    /// (hexabenzocoronene), the zigzag triangle of size n has n − 1 more sites on one sublattice than on the other.
    /// </summary>
    public static Graph Honeycomb(FlakeShape shape, int size, int rows, bool armchair, bool nextNearest)
    {
        double s3 = Math.Sqrt(3);
        var centres = new List<(double X, double Y)>();
        int reach = 2 * Math.Max(size, rows) + 2;
        for (int q = -reach; q <= reach; q++)
            for (int r = -reach; r <= reach; r++)
            {
                // Plaquette centres on the triangular lattice b₁ = (√3, 0), b₂ = (√3/2, 3/2).
                double x = s3 * (q + r / 2.0), y = 1.5 * r;
                bool inside = shape switch
                {
                    FlakeShape.Hexagon when !armchair => Math.Max(Math.Abs(q), Math.Max(Math.Abs(r), Math.Abs(q + r))) <= size - 1,
                    // Rotated by 30°: the outline's normals lie along the plaquette rows (0°, 60°, 120°).
                    FlakeShape.Hexagon => new[] { 0.0, 60.0, 120.0 }.All(a => Math.Abs(x * Math.Cos(a * Math.PI / 180) + y * Math.Sin(a * Math.PI / 180)) <= 1.5 * s3 * (size - 1) + 1e-9),
                    FlakeShape.Triangle => q >= 0 && r >= 0 && q + r <= size - 1,
                    _ => r >= 0 && r < rows && q + (r + 1) / 2 >= 0 && q + (r + 1) / 2 < size,
                };
                if (inside) centres.Add((x, y));
            }

        var sites = new List<(double X, double Y)>();
        var lookup = new Dictionary<(long, long), int>();
        int SiteAt(double x, double y)
        {
            var key = ((long)Math.Round(x * 1000), (long)Math.Round(y * 1000));
            if (lookup.TryGetValue(key, out int i)) return i;
            sites.Add((x, y));
            return lookup[key] = sites.Count - 1;
        }
        foreach (var (cx, cy) in centres.OrderBy(c => Math.Round(c.Y, 6)).ThenBy(c => c.X))
            for (int k = 0; k < 6; k++)
            {
                double a = (30 + 60 * k) * Math.PI / 180;
                SiteAt(cx + Math.Cos(a), cy + Math.Sin(a));
            }
        // Renumber row by row (bottom to top, left to right), so site indices read like the picture.
        var order = Enumerable.Range(0, sites.Count).OrderBy(i => Math.Round(sites[i].Y, 6)).ThenBy(i => sites[i].X).ToArray();
        var placed = order.Select(i => sites[i]).ToArray();
        var byKey = new Dictionary<(long, long), int>();
        for (int i = 0; i < placed.Length; i++) byKey[((long)Math.Round(placed[i].X * 1000), (long)Math.Round(placed[i].Y * 1000))] = i;

        // Sublattice from the vertex angle: A sites point up (their bond to the plaquette row above is vertical).
        var bonds = new List<LatticeBond>();
        var sublattice = new int[placed.Length];
        var neighbours = new List<int>[placed.Length];
        for (int i = 0; i < placed.Length; i++) neighbours[i] = [];
        for (int i = 0; i < placed.Length; i++)
        {
            var (x, y) = placed[i];
            for (int k = 0; k < 6; k++)
            {
                double a = (90 + 60 * k) * Math.PI / 180;
                var key = ((long)Math.Round((x + Math.Cos(a)) * 1000), (long)Math.Round((y + Math.Sin(a)) * 1000));
                if (!byKey.TryGetValue(key, out int j)) continue;
                // From an A site the three bonds point up (90°), down-left (210°), down-right (330°): k = 0, 2, 4.
                if (k % 2 == 0)
                {
                    sublattice[j] = 1;
                    bonds.Add(new LatticeBond(i, j, BondKind.Nearest, k / 2));
                }
                neighbours[i].Add(j);
            }
        }
        var edges = new EdgeKind[placed.Length];
        for (int i = 0; i < placed.Length; i++)
        {
            if (neighbours[i].Count == 3) { edges[i] = EdgeKind.Bulk; continue; }
            // On an armchair edge two boundary sites are bonded to each other; on a zigzag edge they alternate with bulk sites.
            edges[i] = neighbours[i].Any(j => neighbours[j].Count < 3) ? EdgeKind.Armchair : EdgeKind.Zigzag;
        }
        if (nextNearest)
        {
            for (int i = 0; i < placed.Length; i++)
                for (int j = i + 1; j < placed.Length; j++)
                {
                    double dx = placed[i].X - placed[j].X, dy = placed[i].Y - placed[j].Y;
                    if (Math.Abs(dx * dx + dy * dy - 3) < 1e-6) bonds.Add(new LatticeBond(i, j, BondKind.NextNearest, 0));
                }
        }
        var result = placed.Select((p, i) => (p.X, p.Y, sublattice[i])).ToList();
        return new Graph(result, bonds, edges);
    }

    /// <summary>
    /// A lattice given site by site: boundary sites are those with fewer nearest neighbours than the most any site has,
    /// the sublattice is a two-colouring of the nearest-neighbour graph when one exists.
    /// </summary>
    public static Graph Explicit(IReadOnlyList<(double X, double Y)> positions, IReadOnlyList<LatticeBond> bonds)
    {
        int n = positions.Count;
        var degree = new int[n];
        var adjacency = new List<int>[n];
        for (int i = 0; i < n; i++) adjacency[i] = [];
        foreach (var b in bonds.Where(b => b.Kind == BondKind.Nearest))
        {
            degree[b.A]++; degree[b.B]++;
            adjacency[b.A].Add(b.B); adjacency[b.B].Add(b.A);
        }
        int max = degree.DefaultIfEmpty(0).Max();
        var colour = Enumerable.Repeat(-1, n).ToArray();
        bool bipartite = true;
        for (int s = 0; s < n; s++)
        {
            if (colour[s] >= 0) continue;
            colour[s] = 0;
            var queue = new Queue<int>([s]);
            while (queue.Count > 0)
            {
                int i = queue.Dequeue();
                foreach (int j in adjacency[i])
                {
                    if (colour[j] < 0) { colour[j] = 1 - colour[i]; queue.Enqueue(j); }
                    else if (colour[j] == colour[i]) bipartite = false;
                }
            }
        }
        var sites = positions.Select((p, i) => (p.X, p.Y, bipartite ? colour[i] : 0)).ToList();
        var edges = degree.Select(d => d < max ? EdgeKind.Other : EdgeKind.Bulk).ToList();
        return new Graph(sites, bonds, edges);
    }
}

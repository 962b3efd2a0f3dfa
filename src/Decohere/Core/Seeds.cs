namespace Decohere.Core;

/// <summary>
/// The independent random streams of the tool. Each is part of its seeds, so two purposes never share a stream even
/// for equal indices.
/// </summary>
public enum SeedStream
{
    /// <summary>Readout shots: (delay index, block index).</summary>
    Shots = 1,
    /// <summary>Sampled trajectories: (block index).</summary>
    Trajectories = 2,
    /// <summary>Parametric bootstrap of the estimates: (delay index).</summary>
    Bootstrap = 3,
    /// <summary>Per-shot device parameters: (delay index, block index).</summary>
    Jitter = 4,
    /// <summary>The seed of a sweep point: (point index).</summary>
    SweepPoint = 5,
    /// <summary>The Monte Carlo of a tolerance grid point: (grid point index).</summary>
    Tolerance = 6,
    /// <summary>Disorder of a lattice's cavities and couplings: (quantity index).</summary>
    LatticeDisorder = 7,
    /// <summary>Simulated drum spectra of a mode-shape spectroscopy: (collective mode, drum).</summary>
    Spectroscopy = 8,
}

/// <summary>
/// The one way seeds are derived: from (master seed, stream, index a, index b), never from threads or order, so every
/// sampled number is reproducible from the master seed however the work is split. Built from the SplitMix64 finaliser
/// (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014; constants of
/// S. Vigna's reference splitmix64.c).
/// </summary>
public static class Seeds
{
    private const ulong Golden = 0x9E3779B97F4A7C15UL;

    /// <summary>
    /// The 64-bit seed of (master seed, stream, index a, index b): each part is folded in through the SplitMix64
    /// finaliser, so neighbouring indices give unrelated seeds.
    /// </summary>
    public static ulong Derive(long seed, SeedStream stream, long a = 0, long b = 0)
    {
        ulong h = Mix((ulong)seed);
        h = Mix(h ^ (Golden * ((ulong)stream + 1)));
        h = Mix(h + (ulong)a);
        return Mix(h ^ Mix((ulong)b + 0x632BE59BD9B4E019UL));
    }

    /// <summary><see cref="Derive"/> kept to 63 bits: a non-negative seed for a scenario (sweep points).</summary>
    public static long DeriveSeed(long seed, SeedStream stream, long a = 0, long b = 0) => (long)(Derive(seed, stream, a, b) & long.MaxValue);

    /// <summary>One step of SplitMix64: advances the state, returns a mixed value (fills a generator's state from one seed).</summary>
    public static ulong Next(ref ulong state)
    {
        state += Golden;
        return Mix(state);
    }

    /// <summary>The SplitMix64 output function (variant 13 of D. Stafford's 64-bit mixers).</summary>
    public static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }
}

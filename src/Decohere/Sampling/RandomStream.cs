using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace Decohere.Sampling;

/// <summary>
/// A seeded stream of uniform and standard normal deviates: the xoshiro256** generator seeded through SplitMix64
/// (D. Blackman, S. Vigna, ACM Trans. Math. Softw. 47, 36 (2021)), normals by the ziggurat method with 256 layers
/// (G. Marsaglia, W. W. Tsang, J. Stat. Softw. 5(8) (2000); index and value from disjoint bits as advised by
/// J. A. Doornik, "An improved ziggurat method to generate normal random samples", Univ. Oxford (2005)).
/// A mutable struct: pass it by <c>ref</c>. Streams are derived from (master seed, indices) by <see cref="For"/>,
/// never from threads, so results do not depend on scheduling.
/// </summary>
public struct RandomStream
{
    private ulong _s0, _s1, _s2, _s3;

    /// <summary>A stream whose 256-bit state is filled by SplitMix64 from <paramref name="seed"/> (the seeding Vigna recommends).</summary>
    public RandomStream(ulong seed)
    {
        _s0 = SplitMix64(ref seed);
        _s1 = SplitMix64(ref seed);
        _s2 = SplitMix64(ref seed);
        _s3 = SplitMix64(ref seed);
    }

    /// <summary>
    /// The stream for (master seed, purpose, index a, index b): each part is folded in through the SplitMix64 finaliser,
    /// so neighbouring indices give unrelated states.
    /// </summary>
    public static RandomStream For(long seed, StreamPurpose purpose, long a = 0, long b = 0) => new(Derive(seed, purpose, a, b));

    /// <summary>The 64-bit seed of the stream <see cref="For"/> returns.</summary>
    public static ulong Derive(long seed, StreamPurpose purpose, long a = 0, long b = 0)
    {
        ulong h = Mix((ulong)seed);
        h = Mix(h ^ (0x9E3779B97F4A7C15UL * ((ulong)purpose + 1)));
        h = Mix(h + (ulong)a);
        return Mix(h ^ Mix((ulong)b + 0x632BE59BD9B4E019UL));
    }

    /// <summary>One step of SplitMix64 (G. L. Steele, D. Lea, C. H. Flood, OOPSLA 2014): advances the state, returns a mixed value.</summary>
    public static ulong SplitMix64(ref ulong state)
    {
        state += 0x9E3779B97F4A7C15UL;
        return Mix(state);
    }

    /// <summary>The <paramref name="index"/>-th output (from 0) of SplitMix64 started at <paramref name="seed"/>: a per-point seed that
    /// depends on nothing but (seed, index), so results do not depend on order, threads or shards.</summary>
    public static ulong SplitMix64At(long seed, long index) => Mix(unchecked((ulong)seed + 0x9E3779B97F4A7C15UL * ((ulong)index + 1)));

    /// <summary>The SplitMix64 output function (variant 13 of D. Stafford's 64-bit mixers).</summary>
    public static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }

    /// <summary>The next 64 random bits (xoshiro256**).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public ulong NextUInt64()
    {
        ulong result = BitOperations.RotateLeft(_s1 * 5, 7) * 9;
        ulong t = _s1 << 17;
        _s2 ^= _s0;
        _s3 ^= _s1;
        _s1 ^= _s2;
        _s0 ^= _s3;
        _s2 ^= t;
        _s3 = BitOperations.RotateLeft(_s3, 45);
        return result;
    }

    /// <summary>Uniform on [0, 1) with 53 random bits.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextDouble() => (NextUInt64() >> 11) * (1.0 / (1UL << 53));

    /// <summary>Uniform on (0, 1], safe for logarithms.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextOpenDouble() => ((NextUInt64() >> 11) + 1) * (1.0 / (1UL << 53));

    /// <summary>A standard normal deviate (ziggurat; about 99% of draws take the fast path of one 64-bit draw and one compare).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double NextNormal()
    {
        ulong bits = NextUInt64();
        int i = (int)(bits & 0xFF);
        // u in [−1, 1) from the top 53 bits, disjoint from the 8 index bits.
        double u = (long)(bits >> 11) * (2.0 / (1UL << 53)) - 1.0;
        ref double x = ref MemoryMarshal.GetArrayDataReference(Ziggurat.X);
        double z = u * Unsafe.Add(ref x, i);
        if (Math.Abs(z) < Unsafe.Add(ref x, i + 1)) return z;
        return NormalSlow(i, u, z);
    }

    [MethodImpl(MethodImplOptions.NoInlining)]
    private double NormalSlow(int i, double u, double z)
    {
        while (true)
        {
            if (i == 0)
            {
                // Tail beyond R: Marsaglia's exponential-rejection method (Marsaglia & Tsang 2000, sec. 2).
                double tx, ty;
                do
                {
                    tx = Math.Log(NextOpenDouble()) / Ziggurat.R;
                    ty = Math.Log(NextOpenDouble());
                } while (-2 * ty < tx * tx);
                return u < 0 ? tx - Ziggurat.R : Ziggurat.R - tx;
            }
            if (Ziggurat.F[i + 1] + (Ziggurat.F[i] - Ziggurat.F[i + 1]) * NextDouble() < Math.Exp(-0.5 * z * z)) return z;

            ulong bits = NextUInt64();
            i = (int)(bits & 0xFF);
            u = (long)(bits >> 11) * (2.0 / (1UL << 53)) - 1.0;
            z = u * Ziggurat.X[i];
            if (Math.Abs(z) < Ziggurat.X[i + 1]) return z;
        }
    }

    /// <summary>Fills <paramref name="values"/> with standard normal deviates.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void FillNormal(Span<double> values)
    {
        for (int k = 0; k < values.Length; k++) values[k] = NextNormal();
    }
}

/// <summary>Purposes of the independent random streams of a run (part of each stream's seed).</summary>
public enum StreamPurpose
{
    /// <summary>Readout shots: (delay index, block index).</summary>
    Shots = 1,
    /// <summary>Sampled trajectories: (block index).</summary>
    Trajectories = 2,
    /// <summary>Parametric bootstrap of the estimates: (delay index).</summary>
    Bootstrap = 3,
    /// <summary>Per-shot device parameters: (delay index, block index).</summary>
    Jitter = 4,
}

/// <summary>
/// The 256-layer ziggurat for the unnormalised normal density f(x) = exp(−x²/2): R = 3.6541528853610088 and layer area
/// V = 4.92867323399e−3 (G. Marsaglia, W. W. Tsang, J. Stat. Softw. 5(8) (2000)). X[i] is the right edge of layer i
/// (X[0] = V/f(R) is the base strip's equivalent width, X[256] = 0); F[i] = f(X[i]).
/// </summary>
internal static class Ziggurat
{
    public const double R = 3.6541528853610088;
    public const double V = 4.92867323399e-3;
    public static readonly double[] X = new double[257];
    public static readonly double[] F = new double[257];

    static Ziggurat()
    {
        double f(double x) => Math.Exp(-0.5 * x * x);
        X[0] = V / f(R);
        X[1] = R;
        for (int i = 2; i < 256; i++) X[i] = Math.Sqrt(-2 * Math.Log(V / X[i - 1] + f(X[i - 1])));
        X[256] = 0;
        for (int i = 0; i < 257; i++) F[i] = f(X[i]);
    }
}

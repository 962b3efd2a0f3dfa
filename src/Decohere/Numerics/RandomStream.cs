using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using Decohere.Core;

namespace Decohere.Numerics;

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
        _s0 = Seeds.Next(ref seed);
        _s1 = Seeds.Next(ref seed);
        _s2 = Seeds.Next(ref seed);
        _s3 = Seeds.Next(ref seed);
    }

    /// <summary>The stream of (master seed, stream, index a, index b), seeded by <see cref="Seeds.Derive"/>.</summary>
    public static RandomStream For(long seed, SeedStream stream, long a = 0, long b = 0) => new(Seeds.Derive(seed, stream, a, b));

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

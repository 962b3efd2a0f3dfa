using System.Numerics;
using System.Runtime.CompilerServices;

namespace Decohere.IO;

/// <summary>
/// Plain decimal numbers (<c>[+-]digits[.digits][(e|E)[+-]digits]</c>) in ASCII bytes to the nearest double, the value
/// <see cref="double.Parse(string)"/> gives, without making a string. Anything else, and the rare decimal the fast
/// algorithms cannot round with certainty, is declined and left to the general parser.
/// </summary>
/// <remarks>
/// Up to 2⁵³ with a power of ten up to 10²² the result is one correctly rounded IEEE product or quotient of two exact
/// doubles (W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990, SIGPLAN Notices 25(6), 92).
/// Otherwise, up to 19 significant digits, the Eisel–Lemire algorithm: the 64-bit significand times a 128-bit truncated
/// power of five (D. Lemire, "Number parsing at a gigabyte per second", Softw. Pract. Exper. 51, 1700 (2021); that 128
/// bits always suffice is N. Mushtak, D. Lemire, Softw. Pract. Exper. 53, 1427 (2023), but a product whose low bits
/// leave the rounding open is declined anyway).
/// </remarks>
public static class DecimalText
{
    private const int SmallestPower = -342, LargestPower = 308;

    // 5^q for q in [−342, 308], normalised to 128 bits with the top bit set: truncated for q ≥ 0, 2^b / 5^−q rounded up
    // (plus one, then truncated) for q < 0, as in Lemire (2021). Two words per power, high first.
    private static readonly ulong[] PowersOfFive = BuildPowers();

    private static readonly double[] ExactPowersOfTen =
        [1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];

    private static ulong[] BuildPowers()
    {
        var table = new ulong[2 * (LargestPower - SmallestPower + 1)];
        var top = BigInteger.One << 128;
        for (int q = SmallestPower; q <= LargestPower; q++)
        {
            BigInteger c;
            if (q < 0)
            {
                var power = BigInteger.Pow(5, -q);
                int z = (int)(power - 1).GetBitLength();   // 2^z ≥ 5^−q > 2^(z−1)
                c = (BigInteger.One << (q >= -27 ? z + 127 : 2 * z + 128)) / power + 1;
                while (c >= top) c >>= 1;
            }
            else
            {
                c = BigInteger.Pow(5, q);
                int bits = (int)c.GetBitLength();
                c = bits <= 128 ? c << (128 - bits) : c >> (bits - 128);
            }
            int k = 2 * (q - SmallestPower);
            table[k] = (ulong)(c >> 64);
            table[k + 1] = (ulong)(c & ulong.MaxValue);
        }
        return table;
    }

    /// <summary>
    /// Parses <paramref name="text"/> (no white space) when it is a plain decimal number whose nearest double is finite
    /// and certain; false leaves it to <see cref="double.TryParse(ReadOnlySpan{char}, System.Globalization.NumberStyles, IFormatProvider, out double)"/>.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static bool TryParse(ReadOnlySpan<byte> text, out double value)
    {
        value = 0;
        int i = 0;
        bool negative = false;
        if ((uint)i < (uint)text.Length && (text[i] == '-' || text[i] == '+')) negative = text[i++] == '-';
        // Leading zeros are not significant; the first 19 significant digits fit a ulong, more are left to the general parser.
        int first = i;
        while ((uint)i < (uint)text.Length && text[i] == '0') i++;
        int nonZero = i;
        ulong w = 0;
        for (uint d; (uint)i < (uint)text.Length && (d = (uint)(text[i] - '0')) <= 9; i++) w = 10 * w + d;
        int digits = i - first, fraction = 0, significant = i - nonZero;
        if ((uint)i < (uint)text.Length && text[i] == '.')
        {
            int point = ++i;
            if (significant == 0)
                while ((uint)i < (uint)text.Length && text[i] == '0') i++;
            int from = i;
            for (uint d; (uint)i < (uint)text.Length && (d = (uint)(text[i] - '0')) <= 9; i++) w = 10 * w + d;
            significant += i - from;
            fraction = i - point;
            digits += fraction;
        }
        if (digits == 0 || significant > 19) return false;
        long exponent = 0;
        if ((uint)i < (uint)text.Length && (text[i] == 'e' || text[i] == 'E'))
        {
            i++;
            bool down = false;
            if ((uint)i < (uint)text.Length && (text[i] == '-' || text[i] == '+')) down = text[i++] == '-';
            int start = i;
            for (; (uint)i < (uint)text.Length && (uint)(text[i] - '0') <= 9; i++)
                if (exponent < 100_000) exponent = 10 * exponent + (text[i] - '0');
            if (i == start) return false;
            if (down) exponent = -exponent;
        }
        if (i != text.Length) return false;
        long q = exponent - fraction;
        if (w == 0)
        {
            value = negative ? -0.0 : 0.0;
            return true;
        }
        if (w <= 1UL << 53 && q >= -22 && q <= 22)
        {
            value = q >= 0 ? w * ExactPowersOfTen[q] : w / ExactPowersOfTen[-q];
        }
        else
        {
            if (q < SmallestPower || q > LargestPower || !TryEiselLemire((int)q, w, out ulong bits)) return false;
            value = BitConverter.UInt64BitsToDouble(bits);
            if (!double.IsFinite(value)) return false;
        }
        if (negative) value = -value;
        return true;
    }

    // Lemire (2021) for binary64: 52 explicit mantissa bits, exponent bias 1023.
    private static bool TryEiselLemire(int q, ulong w, out ulong bits)
    {
        bits = 0;
        int lz = BitOperations.LeadingZeroCount(w);
        w <<= lz;
        int k = 2 * (q - SmallestPower);
        ulong high = Math.BigMul(w, PowersOfFive[k], out ulong low);
        const ulong precisionMask = ulong.MaxValue >> 55;
        if ((high & precisionMask) == precisionMask)
        {
            ulong second = Math.BigMul(w, PowersOfFive[k + 1], out _);
            low += second;
            if (second > low) high++;
            if ((high & precisionMask) == precisionMask && low == ulong.MaxValue) return false;
        }
        int upper = (int)(high >> 63);
        int shift = upper + 64 - 52 - 3;
        ulong mantissa = high >> shift;
        // floor(q·log2(10)) + 63 from a fixed-point log2(10) (Lemire 2021), exact over the table's range.
        int power2 = (((152170 + 65536) * q) >> 16) + 63 + upper - lz + 1023;
        if (power2 <= 0)
        {
            // Subnormal (or zero): shift into place, round half up; ties cannot occur at these powers.
            if (-power2 + 1 >= 64) return false;
            mantissa >>= -power2 + 1;
            mantissa += mantissa & 1;
            mantissa >>= 1;
            power2 = mantissa < 1UL << 52 ? 0 : 1;
            bits = ((ulong)power2 << 52) | (mantissa & ((1UL << 52) - 1));
            return mantissa != 0;
        }
        // An exact tie (only possible when 5^q fits in 64 bits, −4 ≤ q ≤ 23) rounds to even.
        if (low <= 1 && q >= -4 && q <= 23 && (mantissa & 3) == 1 && (mantissa << shift) == high) mantissa &= ~1UL;
        mantissa += mantissa & 1;
        mantissa >>= 1;
        if (mantissa >= 2UL << 52)
        {
            mantissa = 1UL << 52;
            power2++;
        }
        if (power2 >= 0x7FF) return false;
        bits = ((ulong)power2 << 52) | (mantissa & ((1UL << 52) - 1));
        return true;
    }
}

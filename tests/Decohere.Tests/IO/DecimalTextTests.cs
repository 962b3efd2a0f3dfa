using System.Globalization;
using System.Text;
using Decohere.IO;

namespace Decohere.Tests.IO;

/// <summary>
/// The byte parser of plain decimals against .NET's own double.Parse (an independent, correctly rounding parser, IEEE 754
/// round-to-nearest-even since .NET Core 3.0): every number it accepts must have the same bits, and it must accept the
/// forms numeric files hold, so that the comparison is not empty.
/// </summary>
public class DecimalTextTests
{
    private static double Reference(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);

    private static bool Parse(string s, out double v) => DecimalText.TryParse(Encoding.ASCII.GetBytes(s), out v);

    // True when the parser took the text, once its bits are checked against double.Parse's.
    private static bool Taken(string s)
    {
        if (!Parse(s, out double v)) return false;
        Assert.True(BitConverter.DoubleToInt64Bits(Reference(s)) == BitConverter.DoubleToInt64Bits(v), $"'{s}': {v:R}, double.Parse {Reference(s):R}");
        return true;
    }

    private static void Same(string s) => Assert.True(Taken(s), $"'{s}' declined");

    [Theory]
    [InlineData("0")]
    [InlineData("-0")]
    [InlineData("+0.000e12")]
    [InlineData("0.001")]
    [InlineData(".5")]
    [InlineData("5.")]
    [InlineData("-.5e-3")]
    [InlineData("1E+5")]
    [InlineData("1e22")]
    [InlineData("1e23")]                      // not a double: rounds (1e23 is the classic case of a wrong fast path)
    [InlineData("9007199254740993")]          // 2^53 + 1: a tie, rounds to the even 2^53
    [InlineData("9007199254740995")]          // 2^53 + 3: a tie, rounds up to the even 2^53 + 4
    [InlineData("18014398509481990")]         // 2^54 + 6: a tie between 2^54 + 4 and 2^54 + 8, rounds to the even + 8
    [InlineData("2.2250738585072011e-308")]   // just below the smallest normal double (recalled from memory as a known hard case)
    [InlineData("2.2250738585072012e-308")]
    [InlineData("4.9406564584124654e-324")]   // the smallest subnormal
    [InlineData("1e-320")]                    // subnormal
    [InlineData("1.7976931348623157e308")]    // the largest double
    [InlineData("-12.345678901234567")]
    [InlineData("0.0000000000000000000000000001234567890123456789")]
    [InlineData("1234567890123456789")]       // 19 digits
    [InlineData("7.2057594037927933e16")]     // 3 below 2^56, where doubles are 16 apart: rounds up to 2^56
    public void EdgeCasesHaveTheBitsOfDoubleParse(string s) => Same(s);

    [Theory]
    [InlineData("")]
    [InlineData("-")]
    [InlineData(".")]
    [InlineData("e5")]
    [InlineData("1e")]
    [InlineData("1e+")]
    [InlineData("1.2.3")]
    [InlineData("--1")]
    [InlineData("+-1")]
    [InlineData(" 1")]
    [InlineData("1 ")]
    [InlineData("1,5")]
    [InlineData("0x10")]
    [InlineData("NaN")]
    [InlineData("Infinity")]
    [InlineData("1e400")]                     // ∞ for double.Parse: left to it (and to the reader's refusal)
    [InlineData("1.7976931348623159e308")]    // rounds past the largest double
    [InlineData("1e-400")]                    // below the table: left to the general parser
    [InlineData("2.4703282292062327e-324")]   // under half the smallest subnormal: zero, left to the general parser
    [InlineData("12345678901234567890")]      // 20 significant digits
    public void OtherTextIsLeftToTheGeneralParser(string s) => Assert.False(Parse(s, out _));

    [Fact]
    public void RandomDoublesInEveryFormatHaveTheBitsOfDoubleParse()
    {
        // Log-uniform magnitudes over the whole range, subnormals included, printed as round-trip, exponent and fixed text.
        var random = new Random(20261203);
        int accepted = 0, total = 0;
        string[] formats = ["R", "E16", "E3", "G17", "G5", "F6"];
        for (int k = 0; k < 200_000; k++)
        {
            double x = Math.Pow(10, random.NextDouble() * 630 - 322) * (random.Next(2) == 0 ? -1 : 1);
            total++;
            if (Taken(x.ToString(formats[k % formats.Length], CultureInfo.InvariantCulture))) accepted++;
        }
        // Declined: F6 of large numbers (over 19 digits) and values past the table; most text is parsed here.
        Assert.InRange(accepted, 0.75 * total, total);
    }

    [Fact]
    public void RandomDigitStringsHaveTheBitsOfDoubleParse()
    {
        // 1 to 19 significant digits with leading zeros, a decimal point anywhere and exponents past both ends of the range.
        var random = new Random(7);
        int accepted = 0;
        const int Count = 300_000;
        var sb = new StringBuilder();
        for (int k = 0; k < Count; k++)
        {
            sb.Clear();
            if (random.Next(3) == 0) sb.Append(random.Next(2) == 0 ? '-' : '+');
            sb.Append('0', random.Next(3));
            int digits = 1 + random.Next(19);
            int point = random.Next(digits + 1);
            for (int d = 0; d < digits; d++)
            {
                if (d == point) sb.Append('.');
                sb.Append((char)('0' + (d == 0 ? 1 + random.Next(9) : random.Next(10))));
            }
            if (random.Next(4) != 0) sb.Append(random.Next(2) == 0 ? 'e' : 'E').Append(random.Next(-345, 330));
            if (Taken(sb.ToString())) accepted++;
        }
        Assert.InRange(accepted, 0.9 * Count, Count);
    }

    [Fact]
    public void HalfwayIntegersRoundToEven()
    {
        // Integers halfway between neighbouring doubles in [2^53, 2^63): exact ties that need the round-to-even branch.
        var random = new Random(11);
        for (int k = 0; k < 50_000; k++)
        {
            int e = 53 + random.Next(10);
            ulong spacing = 1UL << (e - 52);
            ulong below = (1UL << e) + spacing * (ulong)random.NextInt64(1L << 52);
            Same((below + spacing / 2).ToString(CultureInfo.InvariantCulture));
        }
    }
}

using Decohere.Core;

namespace Decohere.Tests.Core;

/// <summary>Scenario quantities are the double nearest the decimal the user wrote (C# literals are, by the language specification).</summary>
public class QuantityDecimalTests
{
    [Theory]
    [InlineData("0.7 ms", 0.0007)]
    [InlineData("0.1 ms", 0.0001)]
    [InlineData("2.3 us", 2.3e-6)]
    [InlineData("1.5e3 us", 0.0015)]
    [InlineData("4.1 MHz", 4.1e6)]
    [InlineData("15 mK", 0.015)]
    [InlineData("1.3 ms", 0.0013)]
    [InlineData("5.1 us", 5.1e-6)]
    public void PowerOfTenUnitsShiftTheDecimalInsteadOfMultiplying(string text, double expected)
    {
        Assert.True(Quantity.TryParse(text, text.EndsWith("Hz") ? Dimension.Frequency : text.EndsWith('K') ? Dimension.Temperature : Dimension.Time, out double v, out _));
        Assert.Equal(expected, v);
    }

    [Fact]
    public void MultiplyingWouldNotHaveGivenTheWrittenDecimal()
    {
        // The case the shift exists for: 1.3 × 0.001 rounds twice and misses the double nearest 0.0013.
        Assert.NotEqual(0.0013, 1.3 * 1e-3);
        Assert.True(Quantity.TryParse("1.3 ms", Dimension.Time, out double v, out _));
        Assert.Equal("0.0013", v.ToString("R", System.Globalization.CultureInfo.InvariantCulture));
    }

    [Fact]
    public void DegreesAndOverflowKeepTheirMeaning()
    {
        Assert.True(Quantity.TryParse("90 deg", Dimension.Angle, out double a, out _));
        Assert.Equal(Math.PI / 2, a, 15);
        Assert.False(Quantity.TryParse("1e308 kHz", Dimension.Frequency, out _, out string? error));
        Assert.Contains("overflows", error);
    }
}

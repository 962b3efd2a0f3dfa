using Decohere.Core;

namespace Decohere.Tests.Core;

public class QuantityTests
{
    [Theory]
    [InlineData("4.1 MHz", Dimension.Frequency, 4.1e6)]
    [InlineData("210 kHz", Dimension.Frequency, 2.1e5)]
    [InlineData("5.3GHz", Dimension.Frequency, 5.3e9)]
    [InlineData("0.15 Hz", Dimension.Frequency, 0.15)]
    [InlineData("12", Dimension.Frequency, 12)]
    [InlineData("10 us", Dimension.Time, 1e-5)]
    [InlineData("10 µs", Dimension.Time, 1e-5)]
    [InlineData("2 ms", Dimension.Time, 2e-3)]
    [InlineData("1e-3 s", Dimension.Time, 1e-3)]
    [InlineData("15 mK", Dimension.Temperature, 0.015)]
    [InlineData("800 uK", Dimension.Temperature, 8e-4)]
    [InlineData("90 deg", Dimension.Angle, Math.PI / 2)]
    [InlineData("5 dB", Dimension.Decibel, 5)]
    public void ParsesNumberAndUnit(string text, Dimension dimension, double expected)
    {
        Assert.True(Quantity.TryParse(text, dimension, out double value, out string? error), error);
        Assert.Equal(expected, value, 1e-12 * Math.Abs(expected));
    }

    [Fact]
    public void WrongDimensionNamesBoth()
    {
        Assert.False(Quantity.TryParse("5 kHz", Dimension.Time, out _, out string? error));
        Assert.Contains("frequency", error);
        Assert.Contains("ms", error);
    }

    [Theory]
    [InlineData("nan")]
    [InlineData(".inf")]
    [InlineData("-inf")]
    [InlineData("1e999")]
    public void RefusesNonFinite(string text)
    {
        Assert.False(Quantity.TryParse(text, Dimension.Dimensionless, out _, out string? error));
        Assert.Contains("finite", error);
    }

    [Fact]
    public void UnknownUnitListsAllowed()
    {
        Assert.False(Quantity.TryParse("3 furlongs", Dimension.Time, out _, out string? error));
        Assert.Contains("unknown unit 'furlongs'", error);
    }
}

using System.Globalization;
using Decohere.Core;

namespace Decohere.Tests.Core;

public class RangesTests
{
    private static double Plain(string text) => double.Parse(text, CultureInfo.InvariantCulture);

    private static double Millikelvin(string text) =>
        Quantity.TryParse(text, Dimension.Temperature, out double v, out string? error) ? v : throw new InputException(error!);

    [Fact]
    public void EveryFormGivesTheValuesItNames()
    {
        Assert.Equal([0.0, 1, 2, 3], Ranges.Parse("0:3:4", Plain, "x").Values.ToArray());
        Assert.Equal([0.0, 0.75, 1.5, 2.25, 3], Ranges.Parse("0:3:+0.75", Plain, "x").Values.ToArray());
        // 0.1 is not exact in binary: the step form must still end on TO, not one step short.
        Assert.Equal(31, Ranges.Parse("0:3:+0.1", Plain, "x").Values.Length);
        var log = Ranges.Parse("1:1000:4:log", Plain, "x");
        Assert.True(log.Logarithmic);
        Assert.Equal([1.0, 10, 100, 1000], log.Values.Select(v => Math.Round(v, 9)));
        Assert.Equal([2.0, 5, 7], Ranges.Parse("2, 5,7", Plain, "x").Values.ToArray());
        Assert.Equal([4.0], Ranges.Parse("4", Plain, "x").Values.ToArray());
        Assert.Equal([0.005, 0.010, 0.015], Ranges.Parse("5mK:15mK:+5mK", Millikelvin, "t").Values.Select(v => Math.Round(v, 12)));
    }

    [Theory]
    [InlineData("0:3:0.25", "COUNT '0.25'")]
    [InlineData("3:0:+0.5", "TO (0) must be ≥ FROM (3)")]
    [InlineData("0:3:+0", "STEP must be > 0")]
    [InlineData("0:3", "has 2 fields")]
    [InlineData("0:3:4:lin", "must be 'log'")]
    [InlineData("0:3:4:log", "FROM > 0 and TO > 0")]
    [InlineData("1:3:+1:log", "takes a COUNT")]
    [InlineData("1:3,4", "mixes a range")]
    [InlineData("1,,2", "empty value")]
    [InlineData("1:2:1", "COUNT 1 needs FROM = TO")]
    public void BadRangesNameTheSettingAndTheProblem(string text, string expected)
    {
        var e = Assert.Throws<InputException>(() => Ranges.Parse(text, Plain, "added noise"));
        Assert.StartsWith("added noise:", e.Message);
        Assert.Contains(expected, e.Message);
    }

    [Fact]
    public void CountsAreWholeAndAboveTheMinimum()
    {
        Assert.Equal([500L, 2000, 10000], Ranges.ParseCounts("500,2000,1e4", "shots", 2).ToArray());
        Assert.Equal([1000L, 2000, 3000], Ranges.ParseCounts("1000:3000:+1000", "shots", 2).ToArray());
        Assert.Contains("not a whole number", Assert.Throws<InputException>(() => Ranges.ParseCounts("2.5", "shots", 2)).Message);
        Assert.Contains("too few", Assert.Throws<InputException>(() => Ranges.ParseCounts("1", "shots", 2)).Message);
    }
}

using ScottPlot;
using Decohere.Core;

namespace Decohere.Reports.Plotting;

/// <summary>
/// A time or delay axis whose unit is chosen from the values (µs, ms, s) and which turns logarithmic when the positive
/// values span more than a factor of 30, so early delays are not crowded into one corner. On a log axis a zero delay sits
/// half a decade left of the first positive one, labelled "0" (a broken axis, common practice).
/// </summary>
public sealed class TimeAxis
{
    private readonly double _zeroAt;

    /// <summary>The unit shown.</summary>
    public DisplayUnit Unit { get; }

    /// <summary>Whether coordinates are log10 of the time in <see cref="Unit"/>.</summary>
    public bool Log { get; }

    /// <summary>The axis for these times (s).</summary>
    public TimeAxis(IEnumerable<double> timesS)
    {
        double[] t = [.. timesS.Where(double.IsFinite)];
        Unit = DisplayUnits.For(Dimension.Time, t);
        var positive = t.Where(v => v > 0).ToArray();
        Log = positive.Length >= 2 && positive.Max() / positive.Min() >= 30;
        _zeroAt = Log ? Math.Log10(Unit.From(positive.Min())) - 0.5 : 0;
    }

    /// <summary>The plot coordinate of a time (s).</summary>
    public double At(double timeS) => !Log ? Unit.From(timeS) : timeS > 0 ? Math.Log10(Unit.From(timeS)) : _zeroAt;

    /// <summary>Plot coordinates of many times.</summary>
    public double[] At(IEnumerable<double> timesS) => [.. timesS.Select(At)];

    /// <summary>Sets ticks, label and limits (with a margin) for times from <paramref name="firstS"/> to <paramref name="lastS"/>.</summary>
    public void Apply(IAxis axis, string name, double firstS, double lastS)
    {
        double a = At(firstS), b = At(lastS), pad = 0.03 * Math.Max(b - a, Log ? 0.5 : Unit.From(lastS) > 0 ? Unit.From(lastS) : 1);
        if (Log)
        {
            Ticks.Log(axis, firstS > 0 ? a : _zeroAt + 0.5, b + pad);
            if (firstS <= 0 && axis.TickGenerator is ScottPlot.TickGenerators.NumericManual manual) manual.AddMajor(_zeroAt, "0");
        }
        else Ticks.Linear(axis);
        axis.Label.Text = $"{name} ({Unit.Symbol})";
        axis.Range.Set(a - pad, b + pad);
    }
}

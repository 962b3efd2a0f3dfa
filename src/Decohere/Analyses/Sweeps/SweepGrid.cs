using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Analyses.Sweeps;

/// <summary>
/// The points of a sweep: the Cartesian product of its axes (first axis slowest, last fastest, so point
/// p = Σ_a i_a·Π_{b&gt;a} n_b), or, zipped, the k-th value of every axis at point k.
/// </summary>
public sealed class SweepGrid
{
    /// <summary>Largest grid accepted (a guard against a typo multiplying into billions of points).</summary>
    public const long MaxPoints = 1_000_000_000;

    private readonly long[] _strides;

    /// <summary>The varied parameters, in the order given.</summary>
    public ImmutableArray<SweepAxis> Axes { get; }

    /// <summary>True when the axes are zipped (walked together) instead of multiplied.</summary>
    public bool Zip { get; }

    /// <summary>Number of points.</summary>
    public long PointCount { get; }

    private SweepGrid(ImmutableArray<SweepAxis> axes, bool zip, long count, long[] strides)
    {
        Axes = axes;
        Zip = zip;
        PointCount = count;
        _strides = strides;
    }

    /// <summary>Builds a grid; checks that paths are distinct and that zipped axes have one length.</summary>
    /// <exception cref="InputException">No axis, a repeated path, unequal zipped lengths, or too many points.</exception>
    public static SweepGrid Create(IReadOnlyList<SweepAxis> axes, bool zip)
    {
        if (axes.Count == 0) throw new InputException($"sweep: give at least one parameter to vary ({SweepAxis.Forms})");
        var repeated = axes.GroupBy(a => a.Path.Text).FirstOrDefault(g => g.Count() > 1);
        if (repeated is not null) throw new InputException($"sweep: {repeated.Key} is given {repeated.Count()} times; vary each parameter once");
        var strides = new long[axes.Count];
        long count;
        if (zip)
        {
            count = axes[0].Values.Length;
            if (axes.Any(a => a.Values.Length != count))
                throw new InputException($"zipped axes: need one length; got {string.Join(", ", axes.Select(a => $"{a.Path.Text}: {a.Values.Length}"))}");
        }
        else
        {
            count = 1;
            for (int a = axes.Count - 1; a >= 0; a--)
            {
                strides[a] = count;
                count = checked(count * axes[a].Values.Length);
                if (count > MaxPoints)
                    throw new InputException($"sweep: the grid has more than {MaxPoints:N0} points; split it into several sweeps");
            }
        }
        return new SweepGrid([.. axes], zip, count, strides);
    }

    /// <summary>Index into each axis's values at a point.</summary>
    public int ValueIndex(long point, int axis) => Zip ? (int)point : (int)(point / _strides[axis] % Axes[axis].Values.Length);

    /// <summary>Writes the parameter values (SI) of a point into <paramref name="values"/> (one per axis).</summary>
    public void ValuesAt(long point, Span<double> values)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(point);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(point, PointCount);
        for (int a = 0; a < Axes.Length; a++) values[a] = Axes[a].Values[ValueIndex(point, a)];
    }

    /// <summary>The scenario at a point: the template with each parameter set through <see cref="ParameterPath.Set"/>.</summary>
    /// <exception cref="InputException">A value the parameter does not allow.</exception>
    public Scenario Apply(Scenario template, ReadOnlySpan<double> values)
    {
        var s = template;
        for (int a = 0; a < Axes.Length; a++) s = Axes[a].Path.Set(s, values[a]);
        return s;
    }
}

using System.Runtime.InteropServices;

namespace Decohere.Core;

/// <summary>
/// A list of numbers as a dictionary key, equal only when every value has the same bits: a result kept under it is
/// exactly the one its inputs give, with no tolerance to reason about.
/// </summary>
internal readonly struct ExactValues(double[] values) : IEquatable<ExactValues>
{
    private readonly double[] _values = values;

    public bool Equals(ExactValues other) =>
        MemoryMarshal.Cast<double, long>(_values).SequenceEqual(MemoryMarshal.Cast<double, long>(other._values));

    public override bool Equals(object? obj) => obj is ExactValues other && Equals(other);

    public override int GetHashCode()
    {
        var hash = new HashCode();
        hash.AddBytes(MemoryMarshal.AsBytes(_values.AsSpan()));
        return hash.ToHashCode();
    }
}

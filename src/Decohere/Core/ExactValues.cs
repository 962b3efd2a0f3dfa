using System.Collections.Concurrent;
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

/// <summary>
/// Results kept under their exact inputs (<see cref="ExactValues"/>), for computations repeated with the same inputs
/// across threads; at most <paramref name="capacity"/> are kept, past it a result is computed and not kept.
/// </summary>
internal sealed class ExactMemo<T>(int capacity) where T : class
{
    private readonly ConcurrentDictionary<ExactValues, T> _kept = new();

    /// <summary>The result kept for these inputs, or <paramref name="compute"/>'s (a race computes it twice; either serves).</summary>
    public T GetOrAdd(double[] inputs, Func<T> compute)
    {
        var key = new ExactValues(inputs);
        if (_kept.TryGetValue(key, out var known)) return known;
        var result = compute();
        if (_kept.Count < capacity) _kept.TryAdd(key, result);
        return result;
    }
}

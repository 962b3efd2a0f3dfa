namespace Decohere.Numerics;

/// <summary>A <see cref="System.Random"/> over a <see cref="RandomStream"/>, for MathNet's distribution samplers (χ², gamma).</summary>
public sealed class StreamRandom : Random
{
    private RandomStream _stream;

    /// <summary>A generator on the stream seeded with <paramref name="seed"/>.</summary>
    public StreamRandom(ulong seed) => _stream = new RandomStream(seed);

    /// <summary>The underlying stream, for direct normal draws.</summary>
    public ref RandomStream Stream => ref _stream;

    /// <inheritdoc/>
    protected override double Sample() => _stream.NextDouble();

    /// <inheritdoc/>
    public override double NextDouble() => _stream.NextDouble();

    /// <inheritdoc/>
    public override int Next() => (int)(_stream.NextUInt64() >> 33);

    /// <inheritdoc/>
    public override int Next(int maxValue) => (int)(_stream.NextDouble() * maxValue);

    /// <inheritdoc/>
    public override int Next(int minValue, int maxValue) => minValue + (int)(_stream.NextDouble() * ((long)maxValue - minValue));

    /// <inheritdoc/>
    public override long NextInt64() => (long)(_stream.NextUInt64() >> 1);

    /// <inheritdoc/>
    public override void NextBytes(Span<byte> buffer)
    {
        for (int k = 0; k < buffer.Length; k++) buffer[k] = (byte)(_stream.NextUInt64() >> 56);
    }

    /// <inheritdoc/>
    public override void NextBytes(byte[] buffer) => NextBytes(buffer.AsSpan());
}

using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.IO;
using Decohere.Sampling;

namespace Decohere.Reports;

/// <summary>
/// shots.parquet, streamed one row group per sampler batch: <c>shot, delay_s, time_s, mode, i, q, x, p</c>
/// (x, p the true sampled quadratures, i, q with readout noise; quanta, zero-point variance ½).
/// </summary>
public sealed class ShotsTable : IRunStream<ShotBatch>
{
    /// <summary>The columns, in file order.</summary>
    public static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Long("shot"), ColumnSpec.Double("delay_s"), ColumnSpec.Double("time_s"), ColumnSpec.String("mode"),
        ColumnSpec.Double("i"), ColumnSpec.Double("q"), ColumnSpec.Double("x"), ColumnSpec.Double("p"),
    ];

    private readonly PlainParquetWriter _table;
    private readonly ShotSampler _sampler;
    private long[] _shot = [];
    // One-element arrays: the value on every row of the batch (the writer stores them as a one-entry dictionary).
    private readonly double[] _delay = new double[1], _time = new double[1];
    private readonly string[] _mode;

    private ShotsTable(PlainParquetWriter table, ShotSampler sampler)
    {
        _table = table;
        _sampler = sampler;
        _mode = [sampler.Chain.Mode];   // one value, repeated on every row by the writer
    }

    /// <summary>Opens shots.parquet for the sampler's readout; commit with <see cref="CommitAsync"/>, or dispose to discard.</summary>
    public static Task<ShotsTable> CreateAsync(string path, ShotSampler sampler, Provenance metadata, CancellationToken cancel = default)
    {
        cancel.ThrowIfCancellationRequested();
        var keys = new Dictionary<string, string>(metadata.ToKeyValues())
        {
            ["decohere.readout_added_noise"] = sampler.Chain.AddedNoise.ToString("R", System.Globalization.CultureInfo.InvariantCulture),
            ["decohere.shots_per_delay"] = sampler.ShotsPerDelay.ToString(System.Globalization.CultureInfo.InvariantCulture),
        };
        return Task.FromResult(new ShotsTable(new PlainParquetWriter(path, Columns, keys), sampler));
    }

    /// <summary>The sink to hand to <see cref="ShotSampler.RunAsync"/>.</summary>
    public ValueTask WriteAsync(ShotBatch batch, CancellationToken cancel)
    {
        cancel.ThrowIfCancellationRequested();
        int n = batch.Count;
        if (_shot.Length < n) _shot = new long[n];
        var delay = _sampler.Delays[batch.Delay];
        _delay[0] = delay.DelayS;
        _time[0] = delay.TimeS;
        long first = batch.FirstShot;
        var shot = _shot.AsSpan(0, n);
        for (int k = 0; k < shot.Length; k++) shot[k] = first + k;
        _table.WriteRowGroup(n, [_shot, _delay, _time, _mode, batch.I, batch.Q, batch.X, batch.P]);
        return ValueTask.CompletedTask;
    }

    /// <summary>Finishes the file and moves it to its final name.</summary>
    public Task CommitAsync() => _table.CommitAsync();

    /// <summary>Closes; deletes the partial file unless committed.</summary>
    public ValueTask DisposeAsync() => _table.DisposeAsync();
}

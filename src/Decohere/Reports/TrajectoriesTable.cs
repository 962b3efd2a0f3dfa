using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.IO;
using Decohere.Sampling;

namespace Decohere.Reports;

/// <summary>trajectories.parquet, streamed: <c>trajectory, time_s, mode, x, p</c> for each recorded mode (quanta).</summary>
public sealed class TrajectoriesTable : IRunStream<TrajectoryBatch>
{
    /// <summary>The columns, in file order.</summary>
    public static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Long("trajectory"), ColumnSpec.Double("time_s"), ColumnSpec.String("mode"), ColumnSpec.Double("x"), ColumnSpec.Double("p"),
    ];

    private readonly ParquetTable _table;
    private readonly TrajectorySampler _sampler;
    private readonly string[] _modes;
    // Reused between batches (the batch size is fixed for a run); modes as indices into their names.
    private long[] _trajectory = [];
    private double[] _time = [], _x = [], _p = [];
    private int[] _mode = [];

    private TrajectoriesTable(ParquetTable table, TrajectorySampler sampler, string[] modes)
    {
        _table = table;
        _sampler = sampler;
        _modes = modes;
    }

    /// <summary>Opens the table; the sampler must record whole modes (x then p of each, in pairs).</summary>
    public static async Task<TrajectoriesTable> CreateAsync(string path, TrajectorySampler sampler, Provenance metadata, CancellationToken cancel = default)
    {
        var c = sampler.Components;
        if (c.Length % 2 != 0 || Enumerable.Range(0, c.Length / 2).Any(j => c[2 * j] % 2 != 0 || c[2 * j + 1] != c[2 * j] + 1))
            throw new ArgumentException("the sampler must record (x, p) pairs of whole modes", nameof(sampler));
        var modes = Enumerable.Range(0, c.Length / 2).Select(j => sampler.Dynamics.ModeNames[c[2 * j] / 2]).ToArray();
        ColumnSpec[] columns = [.. Columns[..2], Columns[2] with { Categories = modes }, .. Columns[3..]];
        return new TrajectoriesTable(await ParquetTable.CreateAsync(path, columns, metadata.ToKeyValues(), cancel), sampler, modes);
    }

    /// <summary>The sink to hand to <see cref="TrajectorySampler.RunAsync"/>.</summary>
    public async ValueTask WriteAsync(TrajectoryBatch batch, CancellationToken cancel)
    {
        int modes = _modes.Length, times = batch.Times, rows = batch.Count * times * modes;
        if (_trajectory.Length < rows)
        {
            _trajectory = new long[rows];
            _time = new double[rows];
            _mode = new int[rows];
            _x = new double[rows];
            _p = new double[rows];
        }
        long[] trajectory = _trajectory;
        double[] time = _time, x = _x, p = _p;
        int[] mode = _mode;
        int r = 0;
        for (int t = 0; t < batch.Count; t++)
            for (int k = 0; k < times; k++)
                for (int j = 0; j < modes; j++, r++)
                {
                    int at = (t * times + k) * batch.Components + 2 * j;
                    trajectory[r] = batch.FirstTrajectory + t;
                    time[r] = _sampler.Times[k];
                    mode[r] = j;
                    x[r] = batch.Values[at];
                    p[r] = batch.Values[at + 1];
                }
        await _table.WriteRowGroupAsync(rows, [trajectory, time, mode, x, p], cancel);
    }

    /// <summary>Finishes the file and moves it to its final name.</summary>
    public Task CommitAsync() => _table.CommitAsync();

    /// <summary>Closes; deletes the partial file unless committed.</summary>
    public ValueTask DisposeAsync() => _table.DisposeAsync();
}

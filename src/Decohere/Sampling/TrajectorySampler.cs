using System.Collections.Immutable;
using Decohere.Numerics;
using Decohere.Core;
using Decohere.Engine;

namespace Decohere.Sampling;

/// <summary>A batch of consecutive trajectories: Values[(t·Times + k)·Components + c] for trajectory t, time k, component c. Reused between batches.</summary>
public sealed class TrajectoryBatch(int capacity, int times, int components)
{
    /// <summary>Index of the first trajectory of the batch.</summary>
    public long FirstTrajectory { get; internal set; }
    /// <summary>Trajectories in the batch.</summary>
    public int Count { get; internal set; }
    /// <summary>Output times per trajectory.</summary>
    public int Times { get; } = times;
    /// <summary>Recorded state components per time.</summary>
    public int Components { get; } = components;
    /// <summary>The recorded components, trajectory-major.</summary>
    public double[] Values { get; } = new double[(long)capacity * times * components];
}

/// <summary>Where sampled trajectories go; called in trajectory order.</summary>
public delegate ValueTask TrajectorySink(TrajectoryBatch batch, CancellationToken cancel);

/// <summary>
/// Sampled trajectories of the linear stochastic equation dR = A R dt + dW with ⟨dW dWᵀ⟩ = D dt, stepped exactly on the
/// output grid: R_{k+1} = Φ R_k + chol(Q) ξ_k with (Φ, Q) from one Van Loan step per stage and step length
/// (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)); Q's factor is positive-semi-definite safe. Each
/// trajectory starts from a draw of the initial state and runs continuously through every stage. Sampled in the Wigner
/// representation, exact for linear dynamics and Gaussian states.
/// </summary>
public sealed class TrajectorySampler
{
    private readonly SamplerSettings _settings;
    // Step matrices flat: for step id s, Φ at [2n²·s, 2n²·s + n²) and chol(Q) right after it, row-major (one cache-friendly block per step).
    private readonly double[] _steps;
    private readonly int[] _stepOf;
    private readonly double[] _mean0, _factor0;
    private readonly int[] _components;
    private readonly bool _allComponents;
    private readonly int _n;

    /// <summary>The dynamics sampled.</summary>
    public Dynamics Dynamics { get; }

    /// <summary>Output times (s): t = 0, every multiple of the output step inside a stage, and every stage end (the covariance table's grid).</summary>
    public ImmutableArray<double> Times { get; }

    /// <summary>State-vector indices recorded at each time.</summary>
    public ImmutableArray<int> Components { get; }

    /// <summary>Prepares the exact steps of every stage.</summary>
    /// <param name="dynamics">The solved dynamics.</param>
    /// <param name="components">State-vector indices to record (e.g. 2j and 2j + 1 for mode j).</param>
    /// <param name="settings">Sampler settings.</param>
    /// <param name="outputStepS">Grid step (null: the scenario's output step).</param>
    public TrajectorySampler(Dynamics dynamics, IEnumerable<int> components, SamplerSettings? settings = null, double? outputStepS = null)
    {
        _settings = settings ?? SamplerSettings.Default;
        Dynamics = dynamics;
        Components = [.. components];
        _n = dynamics.Boundaries[0].Covariance.RowCount;
        // The covariance table's grid, so trajectories and covariances line up row by row.
        var grid = dynamics.OutputGrid(outputStepS);
        var path = dynamics.PathStepsThrough(grid.Times);
        Times = grid.Times;
        _stepOf = [.. path.StepOf];
        int nn = _n * _n;
        _steps = new double[2 * nn * path.Steps.Length];
        for (int s = 0; s < path.Steps.Length; s++)
        {
            path.Steps[s].Phi.ToRowMajorArray().CopyTo(_steps, 2 * nn * s);
            GaussianFactor.Of(path.Steps[s].Q).CopyTo(_steps, 2 * nn * s + nn);
        }
        _components = [.. Components];
        _allComponents = _components.Length == _n && _components.Select((c, j) => c == j).All(b => b);
        _mean0 = dynamics.Boundaries[0].Mean.ToArray();
        _factor0 = GaussianFactor.Of(dynamics.Boundaries[0].Covariance);
    }

    /// <summary>
    /// Samples <paramref name="count"/> trajectories in order, handing batches to <paramref name="sink"/>. The sink of one
    /// batch runs while the next is sampled (two buffers alternate), never two sink calls at once.
    /// </summary>
    public async Task RunAsync(long count, TrajectorySink sink, IProgress<long>? progress = null, CancellationToken cancel = default)
    {
        int block = Math.Max(1, _settings.BlockTrajectories);
        int values = Times.Length * Components.Length;
        int blocksPerBatch = (int)(BatchTrajectories(count, Times.Length, Components.Length, _settings) / block);
        TrajectoryBatch[] buffers = [new(blocksPerBatch * block, Times.Length, Components.Length), new(blocksPerBatch * block, Times.Length, Components.Length)];
        long blocks = (count + block - 1) / block;
        long seed = Dynamics.Scenario.Seed;
        int normals = _n * Times.Length;
        Task pending = Task.CompletedTask;
        long pendingDone = 0;
        int turn = 0;
        try
        {
            for (long first = 0; first < blocks; first += blocksPerBatch, turn ^= 1)
            {
                cancel.ThrowIfCancellationRequested();
                var batch = buffers[turn];
                int nBlocks = (int)Math.Min(blocksPerBatch, blocks - first);
                long firstBlock = first;
                Parallel.For(0, nBlocks, _settings.Parallel(cancel), () => new double[normals], (b, _, z) =>
                {
                    var random = RandomStream.For(seed, SeedStream.Trajectories, firstBlock + b);
                    long t0 = (firstBlock + b) * block;
                    int n = (int)Math.Min(block, count - t0);
                    for (int t = 0; t < n; t++)
                    {
                        // Same deviates in the same order as drawing them step by step; drawn in one tight loop first.
                        random.FillNormal(z);
                        var output = batch.Values.AsSpan((int)((long)(b * block + t) * values), values);
                        if (_n == 4 && _allComponents) Run4(z, output);
                        else Run(z, output);
                    }
                    return z;
                }, _ => { });
                batch.FirstTrajectory = first * block;
                batch.Count = (int)Math.Min((long)nBlocks * block, count - first * block);
                await pending;
                if (pendingDone > 0) progress?.Report(pendingDone);
                pending = Task.Run(() => sink(batch, cancel).AsTask(), cancel);
                pendingDone = batch.FirstTrajectory + batch.Count;
            }
            await pending;
            if (pendingDone > 0) progress?.Report(pendingDone);
        }
        catch when (!pending.IsCompleted)
        {
            // Never return while a sink still reads a buffer (the caller may dispose its table next).
            try { await pending; } catch { /* the first failure is the one reported */ }
            throw;
        }
    }

    /// <summary>
    /// Trajectories per batch (one row group of trajectories.parquet): a whole number of random-stream blocks, enough of
    /// them (64) to keep up to 8 threads busy to the end of a batch, within <see cref="SamplerSettings.BatchShots"/> values
    /// or 16 M values (128 MB) per buffer, at least one block. It depends on the settings and the sizes only, never on the
    /// processor count, so the file's layout, and its bytes, are the same for any number of threads.
    /// </summary>
    public static long BatchTrajectories(long count, int times, int components, SamplerSettings settings)
    {
        int block = Math.Max(1, settings.BlockTrajectories);
        long values = Math.Max(1L, (long)times * components);
        long perBatch = Math.Max(block, settings.BatchShots / values / block * block);
        long balanced = Math.Min(64L * block, Math.Max(block, (16L << 20) / values / block * block));
        return Math.Min(Math.Max(perBatch, balanced), Math.Max(block, (count + block - 1) / block * block));
    }

    /// <summary>One trajectory of the 4-component model, all components recorded: the generic step unrolled in registers.</summary>
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    private void Run4(ReadOnlySpan<double> z, Span<double> output)
    {
        var f = _factor0;
        var m = _mean0;
        // Same operation order as the generic path, so both give the same bits.
        double r0 = m[0] + f[0] * z[0] + f[1] * z[1] + f[2] * z[2] + f[3] * z[3];
        double r1 = m[1] + f[4] * z[0] + f[5] * z[1] + f[6] * z[2] + f[7] * z[3];
        double r2 = m[2] + f[8] * z[0] + f[9] * z[1] + f[10] * z[2] + f[11] * z[3];
        double r3 = m[3] + f[12] * z[0] + f[13] * z[1] + f[14] * z[2] + f[15] * z[3];
        output[0] = r0; output[1] = r1; output[2] = r2; output[3] = r3;
        var steps = _steps.AsSpan();
        var stepOf = _stepOf;
        if (output.Length < 4 * (stepOf.Length + 1) || z.Length < 4 * (stepOf.Length + 1)) throw new ArgumentException("buffer too short");
        for (int k = 0; k < stepOf.Length; k++)
        {
            var e = steps.Slice(32 * stepOf[k], 32);
            var x = z.Slice(4 * (k + 1), 4);
            double x0 = x[0], x1 = x[1], x2 = x[2], x3 = x[3];
            double n0 = (e[0] * r0 + e[16] * x0) + (e[1] * r1 + e[17] * x1) + (e[2] * r2 + e[18] * x2) + (e[3] * r3 + e[19] * x3);
            double n1 = (e[4] * r0 + e[20] * x0) + (e[5] * r1 + e[21] * x1) + (e[6] * r2 + e[22] * x2) + (e[7] * r3 + e[23] * x3);
            double n2 = (e[8] * r0 + e[24] * x0) + (e[9] * r1 + e[25] * x1) + (e[10] * r2 + e[26] * x2) + (e[11] * r3 + e[27] * x3);
            double n3 = (e[12] * r0 + e[28] * x0) + (e[13] * r1 + e[29] * x1) + (e[14] * r2 + e[30] * x2) + (e[15] * r3 + e[31] * x3);
            r0 = n0; r1 = n1; r2 = n2; r3 = n3;
            var o = output.Slice(4 * (k + 1), 4);
            o[0] = r0; o[1] = r1; o[2] = r2; o[3] = r3;
        }
    }

    /// <summary>One trajectory into <paramref name="output"/> (time-major, recorded components) from its deviates <paramref name="z"/> (n per time).</summary>
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    private void Run(ReadOnlySpan<double> z, Span<double> output)
    {
        int n = _n, c = _components.Length, nn = n * n;
        Span<double> r = stackalloc double[n];
        Span<double> next = stackalloc double[n];
        MultiplyAdd(_factor0, z[..n], _mean0, r, n);
        Record(r, output, 0, c);
        for (int k = 0; k < _stepOf.Length; k++)
        {
            var xi = z.Slice(n * (k + 1), n);
            var phi = _steps.AsSpan(2 * nn * _stepOf[k], nn);
            var l = _steps.AsSpan(2 * nn * _stepOf[k] + nn, nn);
            for (int a = 0; a < n; a++)
            {
                double sum = 0;
                int row = a * n;
                for (int b = 0; b < n; b++) sum += phi[row + b] * r[b] + l[row + b] * xi[b];
                next[a] = sum;
            }
            next.CopyTo(r);
            Record(r, output, k + 1, c);
        }
    }

    private void Record(ReadOnlySpan<double> r, Span<double> output, int time, int c)
    {
        for (int j = 0; j < c; j++) output[time * c + j] = r[_components[j]];
    }

    private static void MultiplyAdd(double[] m, ReadOnlySpan<double> v, double[] offset, Span<double> result, int n)
    {
        for (int a = 0; a < n; a++)
        {
            double sum = offset[a];
            for (int b = 0; b < n; b++) sum += m[a * n + b] * v[b];
            result[a] = sum;
        }
    }
}

using System.Collections.Immutable;
using Decohere.Engine;
using Decohere.Numerics;

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
    private readonly double[][] _phi;
    private readonly double[][] _factor;
    private readonly int[] _stepOf;
    private readonly double[] _mean0, _factor0;
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
        var scenario = dynamics.Scenario;
        _n = dynamics.Boundaries[0].Covariance.RowCount;
        double step = outputStepS ?? scenario.OutputStepS;
        var times = new List<double> { 0 };
        var stepOf = new List<int>();
        var phi = new List<double[]>();
        var factor = new List<double[]>();
        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            var model = dynamics.Models[i];
            var cache = new Dictionary<long, int>();
            int StepFor(double dt)
            {
                long key = BitConverter.DoubleToInt64Bits(dt);
                if (!cache.TryGetValue(key, out int id))
                {
                    var d = VanLoan.Discretize(model.Drift, model.Diffusion, dt);
                    phi.Add(d.Phi.ToRowMajorArray());
                    factor.Add(GaussianFactor.Of(d.Q));
                    cache[key] = id = phi.Count - 1;
                }
                return id;
            }
            // The same grid as the covariance table (Evolution.Run), so trajectories and covariances line up row by row.
            double t0 = dynamics.StageStarts[i], t1 = t0 + scenario.Stages[i].DurationS;
            long k = (long)Math.Floor(t0 / step + 1e-9) + 1;
            double previous = t0;
            for (; k * step < t1 - 1e-9 * step; k++)
            {
                double t = k * step;
                double dt = t - previous;
                stepOf.Add(StepFor(Math.Abs(dt - step) <= 1e-9 * step ? step : dt));
                times.Add(t);
                previous = t;
            }
            if (t1 - previous > 0)
            {
                stepOf.Add(StepFor(t1 - previous));
                times.Add(t1);
            }
        }
        Times = [.. times];
        _stepOf = [.. stepOf];
        _phi = [.. phi];
        _factor = [.. factor];
        _mean0 = dynamics.Boundaries[0].Mean.ToArray();
        _factor0 = GaussianFactor.Of(dynamics.Boundaries[0].Covariance);
    }

    /// <summary>Samples <paramref name="count"/> trajectories in order, handing batches to <paramref name="sink"/>.</summary>
    public async Task RunAsync(long count, TrajectorySink sink, IProgress<long>? progress = null, CancellationToken cancel = default)
    {
        int block = Math.Max(1, _settings.BlockTrajectories);
        long perBatch = Math.Max(block, (_settings.BatchShots / Math.Max(1, Times.Length * Components.Length)) / block * block);
        int blocksPerBatch = (int)(perBatch / block);
        var batch = new TrajectoryBatch(blocksPerBatch * block, Times.Length, Components.Length);
        long blocks = (count + block - 1) / block;
        long seed = Dynamics.Scenario.Seed;
        for (long first = 0; first < blocks; first += blocksPerBatch)
        {
            cancel.ThrowIfCancellationRequested();
            int nBlocks = (int)Math.Min(blocksPerBatch, blocks - first);
            long firstBlock = first;
            Parallel.For(0, nBlocks, _settings.Parallel(cancel), b =>
            {
                var random = RandomStream.For(seed, StreamPurpose.Trajectories, firstBlock + b);
                long t0 = (firstBlock + b) * block;
                int n = (int)Math.Min(block, count - t0);
                for (int t = 0; t < n; t++)
                    Run(ref random, batch.Values.AsSpan((int)((long)(b * block + t) * Times.Length * Components.Length), Times.Length * Components.Length));
            });
            batch.FirstTrajectory = first * block;
            batch.Count = (int)Math.Min((long)nBlocks * block, count - first * block);
            await sink(batch, cancel);
            progress?.Report(batch.FirstTrajectory + batch.Count);
        }
    }

    /// <summary>One trajectory into <paramref name="output"/> (time-major, recorded components).</summary>
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    private void Run(ref RandomStream random, Span<double> output)
    {
        int n = _n, c = Components.Length;
        Span<double> r = stackalloc double[n];
        Span<double> next = stackalloc double[n];
        Span<double> xi = stackalloc double[n];
        for (int a = 0; a < n; a++) xi[a] = random.NextNormal();
        MultiplyAdd(_factor0, xi, _mean0, r, n);
        Record(r, output, 0, c);
        for (int k = 0; k < _stepOf.Length; k++)
        {
            int s = _stepOf[k];
            for (int a = 0; a < n; a++) xi[a] = random.NextNormal();
            var phi = _phi[s];
            var l = _factor[s];
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
        for (int j = 0; j < c; j++) output[time * c + j] = r[Components[j]];
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

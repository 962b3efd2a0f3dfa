using System.Collections.Immutable;
using Decohere.Model.Readouts;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Sampling;

/// <summary>One readout delay: its time and the model's exact Gaussian state there.</summary>
/// <param name="Index">Position in <c>readout.delays</c>.</param>
/// <param name="DelayS">Delay from the start of the readout stage (s).</param>
/// <param name="TimeS">Time from the start of the first stage (s).</param>
/// <param name="State">The exact state (mean, covariance) at that time.</param>
/// <param name="Model">The readout mode's predicted moments.</param>
public sealed record ReadoutDelay(int Index, double DelayS, double TimeS, GaussianState State, ModeMoments Model);

/// <summary>
/// A batch of consecutive shots of one delay, in shot order. Arrays are reused between batches: copy what you keep.
/// </summary>
public sealed class ShotBatch(int capacity)
{
    /// <summary>Delay index.</summary>
    public int Delay { get; internal set; }
    /// <summary>Index of the first shot of the batch within its delay.</summary>
    public long FirstShot { get; internal set; }
    /// <summary>Shots in the batch.</summary>
    public int Count { get; internal set; }
    /// <summary>Measured in-phase quadrature (true x plus readout noise).</summary>
    public double[] I { get; } = new double[capacity];
    /// <summary>Measured quadrature-phase quadrature (true p plus readout noise).</summary>
    public double[] Q { get; } = new double[capacity];
    /// <summary>True sampled x before readout noise.</summary>
    public double[] X { get; } = new double[capacity];
    /// <summary>True sampled p before readout noise.</summary>
    public double[] P { get; } = new double[capacity];
}

/// <summary>Where sampled shots go (e.g. a Parquet table); called in delay and shot order.</summary>
public delegate ValueTask ShotSink(ShotBatch batch, CancellationToken cancel);

/// <summary>
/// Direct Monte Carlo of readout shots: every shot is a fresh preparation. At each delay the readout mode's (x, p) is drawn
/// from its exact Gaussian marginal (the 2×2 block of the full state's mean and covariance — the marginal of a Gaussian
/// is its sub-block, so this is the full-vector draw without the unused components), and independent Gaussian noise of
/// variance n_add is added to each to give (i, q). With jitter, each shot's dynamics is rebuilt from drawn parameters.
/// Random streams are per (delay, block of <see cref="SamplerSettings.BlockShots"/> shots), so output is bit-identical for any thread count.
/// </summary>
public sealed class ShotSampler
{
    private readonly SamplerSettings _settings;

    /// <summary>The scenario (with the seed in use).</summary>
    public Scenario Scenario { get; }

    /// <summary>The nominal (jitter-free) dynamics.</summary>
    public Dynamics Dynamics { get; }

    /// <summary>The measurement chain.</summary>
    public IReadoutChain Chain { get; }

    /// <summary>The readout delays with their model states.</summary>
    public ImmutableArray<ReadoutDelay> Delays { get; }

    /// <summary>Shots per delay.</summary>
    public long ShotsPerDelay { get; }

    /// <summary>Total shots over all delays.</summary>
    public long TotalShots => ShotsPerDelay * Delays.Length;

    /// <summary>Prepares a sampler for the scenario's readout.</summary>
    /// <exception cref="InputException">The scenario has no readout, or its readout cannot be built.</exception>
    public ShotSampler(Scenario scenario, Dynamics? dynamics = null, SamplerSettings? settings = null, long? shotsPerDelay = null)
    {
        _settings = settings ?? SamplerSettings.Default;
        if (_settings.BlockShots < 1) throw new ArgumentOutOfRangeException(nameof(settings), "BlockShots must be ≥ 1");
        Scenario = scenario;
        Dynamics = dynamics ?? Dynamics.Solve(scenario);
        Chain = ReadoutChains.For(scenario);
        var readout = scenario.Readout!;
        ShotsPerDelay = shotsPerDelay ?? readout.Shots;
        double start = Dynamics.StageStarts[scenario.StageIndex(readout.Stage)];
        var states = Dynamics.StatesAt([.. readout.DelaysS.Select(d => start + d)]);
        Delays = [.. readout.DelaysS.Select((d, k) => new ReadoutDelay(k, d, start + d, states[k], states[k].Moments(Chain.ModeIndex)))];
    }

    /// <summary>
    /// Samples every delay's shots in order, handing each batch to <paramref name="sink"/>, and returns the sufficient
    /// statistics of (i, q) per delay. Memory is bounded by two batches whatever the number of shots: the sink of one batch
    /// runs (on a pool thread) while the next is sampled, never two sink calls at once.
    /// </summary>
    public async Task<QuadratureStatistics[]> RunAsync(ShotSink? sink = null, IProgress<long>? progress = null, CancellationToken cancel = default)
    {
        int block = _settings.BlockShots;
        long blocksPerDelay = (ShotsPerDelay + block - 1) / block;
        int blocksPerBatch = (int)Math.Min(Math.Max(1, _settings.BatchShots / block), blocksPerDelay);
        ShotBatch[] buffers = sink is null ? [new(blocksPerBatch * block)] : [new(blocksPerBatch * block), new(blocksPerBatch * block)];
        var blockStats = new QuadratureStatistics[blocksPerBatch];
        var result = new QuadratureStatistics[Delays.Length];
        long done = 0, pendingDone = 0;
        Task pending = Task.CompletedTask;
        int turn = 0;
        try
        {
            foreach (var delay in Delays)
            {
                long blocks = (ShotsPerDelay + block - 1) / block;
                var kernel = new DelayKernel(this, delay);
                var total = QuadratureStatistics.Empty;
                for (long first = 0; first < blocks; first += blocksPerBatch)
                {
                    cancel.ThrowIfCancellationRequested();
                    var batch = buffers[turn];
                    turn = (turn + 1) % buffers.Length;
                    int count = (int)Math.Min(blocksPerBatch, blocks - first);
                    long firstBlock = first;
                    Parallel.For(0, count, _settings.Parallel(cancel), b =>
                    {
                        long shot0 = (firstBlock + b) * block;
                        int n = (int)Math.Min(block, ShotsPerDelay - shot0);
                        int offset = b * block;
                        kernel.Fill(firstBlock + b, batch, offset, n);
                        blockStats[b] = QuadratureStatistics.Of(batch.I.AsSpan(offset, n), batch.Q.AsSpan(offset, n));
                    });
                    for (int b = 0; b < count; b++) total = total.Merge(blockStats[b]);
                    batch.Delay = delay.Index;
                    batch.FirstShot = first * block;
                    batch.Count = (int)Math.Min((long)count * block, ShotsPerDelay - first * block);
                    done += batch.Count;
                    if (sink is null)
                    {
                        progress?.Report(done);
                        continue;
                    }
                    await pending;
                    if (pendingDone > 0) progress?.Report(pendingDone);
                    pending = Task.Run(() => sink(batch, cancel).AsTask(), cancel);
                    pendingDone = done;
                }
                result[delay.Index] = total;
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
        return result;
    }

    /// <summary>
    /// Statistics of (i, q) for one delay without keeping x, p: the readout noise is folded into the covariance
    /// (V + n_add·I) so each shot costs two normal deviates. Different numbers from <see cref="RunAsync"/> (other use of
    /// the streams), the same distribution. Jitter is not supported here.
    /// </summary>
    public QuadratureStatistics SampleStatistics(int delayIndex, long shots, CancellationToken cancel = default)
    {
        if (!Scenario.Jitter.IsNone) throw new NotSupportedException("SampleStatistics draws the pure Gaussian ensemble; use RunAsync with jitter");
        var delay = Delays[delayIndex];
        var m = delay.Model;
        double n = Chain.AddedNoise;
        var f = GaussianFactor.Of(MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(new[,] { { m.VarX + n, m.CovXP }, { m.CovXP, m.VarP + n } }));
        double l00 = f[0], l01 = f[1], l10 = f[2], l11 = f[3];
        int block = _settings.BlockShots;
        long blocks = (shots + block - 1) / block;
        var stats = new QuadratureStatistics[blocks];
        long seed = Scenario.Seed;
        Parallel.For(0L, blocks, _settings.Parallel(cancel), b =>
            stats[b] = FoldedBlock(RandomStream.For(seed, SeedStream.Shots, -1 - delayIndex, b), (int)Math.Min(block, shots - b * block), l00, l01, l10, l11, m.MeanX, m.MeanP));
        var total = QuadratureStatistics.Empty;
        foreach (var s in stats) total = total.Merge(s);
        return total;
    }

    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    private static QuadratureStatistics FoldedBlock(RandomStream random, int count, double l00, double l01, double l10, double l11, double meanX, double meanP)
    {
        // Sums about the known mean (the shifted-data algorithm; T. F. Chan, G. H. Golub, R. J. LeVeque,
        // Am. Stat. 37, 242 (1983)) need no second pass and lose no digits to the mean.
        double si = 0, sq = 0, sii = 0, sqq = 0, siq = 0;
        for (int k = 0; k < count; k++)
        {
            double z1 = random.NextNormal(), z2 = random.NextNormal();
            double di = l00 * z1 + l01 * z2, dq = l10 * z1 + l11 * z2;
            si += di; sq += dq; sii += di * di; sqq += dq * dq; siq += di * dq;
        }
        double mi = si / count, mq = sq / count;
        return new QuadratureStatistics(count, meanX + mi, meanP + mq,
            sii - count * mi * mi, sqq - count * mq * mq, siq - count * mi * mq);
    }

    /// <summary>Fills blocks of one delay; stateless apart from the precomputed factor, so blocks can run in parallel.</summary>
    private sealed class DelayKernel
    {
        private readonly ShotSampler _owner;
        private readonly ReadoutDelay _delay;
        private readonly double _l00, _l01, _l10, _l11, _meanX, _meanP, _noise;

        public DelayKernel(ShotSampler owner, ReadoutDelay delay)
        {
            _owner = owner;
            _delay = delay;
            (_l00, _l01, _l10, _l11) = Factor(delay.State, owner.Chain.ModeIndex);
            _meanX = delay.Model.MeanX;
            _meanP = delay.Model.MeanP;
            _noise = Math.Sqrt(owner.Chain.AddedNoise);
        }

        private static (double, double, double, double) Factor(GaussianState state, int mode)
        {
            var block = state.Covariance.SubMatrix(2 * mode, 2, 2 * mode, 2);
            var f = GaussianFactor.Of(block);
            return (f[0], f[1], f[2], f[3]);
        }

        // Hot loop: optimised at once rather than after tiering, so short runs and benchmarks see the same code.
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
        public void Fill(long blockIndex, ShotBatch batch, int offset, int count)
        {
            var scenario = _owner.Scenario;
            var random = RandomStream.For(scenario.Seed, SeedStream.Shots, _delay.Index, blockIndex);
            var x = batch.X.AsSpan(offset, count);
            var p = batch.P.AsSpan(offset, count);
            var i = batch.I.AsSpan(offset, count);
            var q = batch.Q.AsSpan(offset, count);
            if (scenario.Jitter.IsNone)
            {
                double l00 = _l00, l01 = _l01, l10 = _l10, l11 = _l11, mx = _meanX, mp = _meanP, s = _noise;
                for (int k = 0; k < count; k++)
                    Draw(ref random, l00, l01, l10, l11, mx, mp, s, out x[k], out p[k], out i[k], out q[k]);
                return;
            }
            var parameters = RandomStream.For(scenario.Seed, SeedStream.Jitter, _delay.Index, blockIndex);
            for (int k = 0; k < count; k++)
            {
                var shotScenario = JitterDraw.Apply(scenario, ref parameters);
                var state = Dynamics.Solve(shotScenario).StateAt(_delay.TimeS);
                var (l00, l01, l10, l11) = Factor(state, _owner.Chain.ModeIndex);
                double mx = state.Mean[2 * _owner.Chain.ModeIndex], mp = state.Mean[2 * _owner.Chain.ModeIndex + 1];
                Draw(ref random, l00, l01, l10, l11, mx, mp, _noise, out x[k], out p[k], out i[k], out q[k]);
            }
        }

        // One shot: (x, p) = mean + L·(z₁, z₂) with L the 2×2 factor of the mode's covariance, then readout noise of σ = √n_add.
        [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]
        private static void Draw(ref RandomStream random, double l00, double l01, double l10, double l11, double mx, double mp, double noise,
            out double x, out double p, out double i, out double q)
        {
            double z1 = random.NextNormal(), z2 = random.NextNormal();
            x = mx + l00 * z1 + l01 * z2;
            p = mp + l10 * z1 + l11 * z2;
            i = x + noise * random.NextNormal();
            q = p + noise * random.NextNormal();
        }
    }
}

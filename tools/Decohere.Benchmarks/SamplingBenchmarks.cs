using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Engines;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>
/// Throughput of the demo's readout sampling. Each benchmark reports time per readout sample (one i or q value) or per
/// trajectory step via OperationsPerInvoke, so the rate is 1e9 / (ns per op).
/// </summary>
[SimpleJob(RunStrategy.Monitoring, launchCount: 1, warmupCount: 3, iterationCount: 5)]
public class SamplingBenchmarks
{
    private const long Shots = 10_000_000;
    private const int Normals = 10_000_000;
    private const int Trajectories = 20_000;
    private ShotSampler _sampler = null!;
    private TrajectorySampler _paths = null!;
    private double[] _buffer = null!;
    private Scenario _scenario = null!;

    [GlobalSetup]
    public void Setup()
    {
        _scenario = ScenarioLoader.Demo();
        var dynamics = Dynamics.Solve(_scenario);
        _sampler = new ShotSampler(_scenario, dynamics, shotsPerDelay: Shots);
        _paths = new TrajectorySampler(dynamics, [0, 1, 2, 3]);
        _buffer = new double[Normals];
    }

    /// <summary>The normal-deviate generator alone, one thread.</summary>
    [Benchmark(OperationsPerInvoke = Normals)]
    public double NormalDeviatesOneThread()
    {
        var random = new RandomStream(1);
        random.FillNormal(_buffer);
        return _buffer[^1];
    }

    /// <summary>Direct sampling of (i, q) with the noise folded into the covariance, statistics only (no x, p, no writing).</summary>
    [Benchmark(OperationsPerInvoke = (int)(2 * Shots))]
    public double DirectSamplesFoldedNoise() => _sampler.SampleStatistics(1, Shots).VarianceI;

    /// <summary>Direct sampling keeping x, p and i, q for every shot (what shots.parquet needs), no writing; one delay.</summary>
    [Benchmark(OperationsPerInvoke = (int)(2 * Shots))]
    public async Task<double> DirectSamplesWithTrueQuadratures()
    {
        var one = new ShotSampler(_scenario with { Readout = _scenario.Readout! with { DelaysS = [0.001] } }, _sampler.Dynamics, shotsPerDelay: Shots);
        var s = await one.RunAsync();
        return s[0].VarianceI;
    }

    /// <summary>Direct sampling written to shots.parquet (8 columns), one delay.</summary>
    [Benchmark(OperationsPerInvoke = (int)(2 * Shots))]
    public async Task<long> DirectSamplesWrittenToParquet()
    {
        var one = new ShotSampler(_scenario with { Readout = _scenario.Readout! with { DelaysS = [0.001] } }, _sampler.Dynamics, shotsPerDelay: Shots);
        string path = Path.Combine(Path.GetTempPath(), $"decohere-bench-{Environment.ProcessId}.parquet");
        await using (var table = await ShotsTable.CreateAsync(path, one, Provenance.For(_scenario)))
        {
            await one.RunAsync(table.WriteAsync);
            await table.CommitAsync();
        }
        long size = new FileInfo(path).Length;
        File.Delete(path);
        return size;
    }

    /// <summary>Trajectories of the 4-dimensional cavity-plus-drum demo on its 10 µs grid (1,101 times), no writing.</summary>
    [Benchmark(OperationsPerInvoke = Trajectories * 1100)]
    public async Task<double> TrajectorySteps()
    {
        double last = 0;
        await _paths.RunAsync(Trajectories, (b, _) => { last = b.Values[0]; return ValueTask.CompletedTask; });
        return last;
    }
}

using BenchmarkDotNet.Attributes;
using Decohere.Analyses.Sweeps;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>
/// A 20 × 20 sweep of the demo (blue coupling × bath temperature): steady-state squeezing of the squeeze stage, run in
/// parallel with the chunk store a resumable run keeps, and written to sweep.parquet and its plot (PNG and SVG).
/// </summary>
public class SweepSteadySqueezing
{
    private Sweep _sweep = null!;
    private string _dir = null!;

    [GlobalSetup]
    public void Setup()
    {
        _sweep = Sweep.Parse(ScenarioLoader.Demo(),
            ["stages.squeeze.tones[1].coupling=2kHz:24kHz:20", "modes.drum.bath.temperature=5mK:100mK:20:log"], false, "steady_squeezing_db:squeeze");
        _dir = Path.Combine(Path.GetTempPath(), $"decohere-bench-sweep-{Environment.ProcessId}");
    }

    [Benchmark(Description = "demo: 20x20 steady squeezing sweep")]
    public async Task<long> Run()
    {
        var result = await SweepAnalysis.SolveAsync(_sweep, new SweepSettings(), new SweepChunkStore(_dir));
        await new SweepReport().WriteAsync(result, _dir);
        return result.Computed;
    }

    [GlobalCleanup]
    public void Cleanup()
    {
        if (Directory.Exists(_dir)) Directory.Delete(_dir, recursive: true);
    }
}

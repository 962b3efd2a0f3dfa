using BenchmarkDotNet.Attributes;
using System.Globalization;
using System.Text;
using Decohere.Analyses.Fitting;
using Decohere.IO;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Benchmarks;

/// <summary>
/// A fit of three free parameters (bath occupancy, linewidth, added noise) to 40 delays × 10,000 shots of a single
/// released mechanical mode, with profile intervals for all three: reading the shot CSV (400,000 rows) and fitting.
/// Target: under 2 s on 2 cores.
/// </summary>
[ShortRunJob]
[MemoryDiagnoser]
public class FitBenchmark
{
    private Scenario _scenario = null!;
    private string _csv = null!;
    private FitData _data = null!;

    private static readonly string[] Free = ["modes.drum.bath.occupancy", "modes.drum.linewidth", "readout.added_noise"];

    [GlobalSetup]
    public void Setup()
    {
        _scenario = ScenarioLoader.Parse("""
            name: bench-drum
            model: effective
            modes:
              drum: { kind: mechanical, frequency: 4.1 MHz, linewidth: 10 Hz, bath: { occupancy: 50 } }
            initial:
              drum: { state: ground }
            stages:
              - name: release
                duration: 50 ms
            readout: { mode: drum, added_noise: 1.3, shots: 10000, stage: release, delays: [0 s] }
            output: { step: 1 ms }
            seed: 1
            """, "bench.yaml");
        // Shots from the closed form of a single damped mode released from the ground state (data generation only).
        var rng = new Random(42);
        double gamma = 2 * Math.PI * 10;
        var sb = new StringBuilder("delay_s,i,q\n");
        for (int k = 0; k < 40; k++)
        {
            double d = k * 0.001;
            double sd = Math.Sqrt(Math.Exp(-gamma * d) * 0.5 + (1 - Math.Exp(-gamma * d)) * 50.5 + 1.3);
            for (int s = 0; s < 10_000; s++)
            {
                double u1 = 1 - rng.NextDouble(), u2 = rng.NextDouble();
                double r = Math.Sqrt(-2 * Math.Log(u1));
                sb.Append(CultureInfo.InvariantCulture, $"{d:R},{sd * r * Math.Cos(2 * Math.PI * u2):R},{sd * r * Math.Sin(2 * Math.PI * u2):R}\n");
            }
        }
        _csv = Path.Combine(Path.GetTempPath(), "decohere-fit-benchmark.csv");
        File.WriteAllText(_csv, sb.ToString());
        // Start the fit away from the truth.
        _scenario = ParameterPath.Parse("modes.drum.bath.occupancy", _scenario).Set(_scenario, 20);
        _data = FitDataReader.ReadAsync(_csv, _scenario).GetAwaiter().GetResult();
    }

    [GlobalCleanup]
    public void Cleanup() => File.Delete(_csv);

    /// <summary>Read 400,000 shots from CSV, reduce them, fit, profile.</summary>
    [Benchmark]
    public FitResult ReadAndFit() => FitAnalysis.Solve(_scenario, new FitSettings { Free = [.. Free] }, FitDataReader.ReadAsync(_csv, _scenario).GetAwaiter().GetResult());

    /// <summary>The CSV read alone, reduced to the per-delay sufficient statistics.</summary>
    [Benchmark]
    public FitData ReadOnly() => FitDataReader.ReadAsync(_csv, _scenario).GetAwaiter().GetResult();

    /// <summary>The fit alone, on the per-delay sufficient statistics.</summary>
    [Benchmark]
    public FitResult FitOnly() => FitAnalysis.Solve(_scenario, new FitSettings { Free = [.. Free] }, _data);
}

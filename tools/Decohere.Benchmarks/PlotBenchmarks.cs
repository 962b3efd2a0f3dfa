using BenchmarkDotNet.Attributes;
using Decohere.Engine;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>
/// variance.png and .svg of a 200,000-time covariance table (demo, 11 ms at 55 ns steps): the series are drawn at
/// screen resolution, so each file should take tens of milliseconds and the SVG a few hundred kB.
/// </summary>
[MemoryDiagnoser]
public class VariancePlotRender
{
    private Evolution _evolution = null!;
    private string _dir = null!;

    [GlobalSetup]
    public void Setup()
    {
        var demo = ScenarioLoader.Demo();
        _evolution = Evolution.Run(Dynamics.Solve(demo), new EvolutionSettings(demo.TotalDurationS / 200_000));
        _dir = Directory.CreateTempSubdirectory("decohere-plot-").FullName;
    }

    [GlobalCleanup]
    public void Cleanup()
    {
        foreach (var f in Directory.GetFiles(_dir)) Console.WriteLine($"{Path.GetFileName(f)}: {new FileInfo(f).Length / 1024} kB");
        Directory.Delete(_dir, recursive: true);
    }

    [Benchmark(Description = "variance plot, 200,000 times: PNG")]
    public void Png() => VariancePlot.Build(_evolution).SavePng(Path.Combine(_dir, "variance.png"), 1200, 720);

    [Benchmark(Description = "variance plot, 200,000 times: PNG + SVG")]
    public string[] PngAndSvg() => VariancePlot.Draw(_evolution, Path.Combine(_dir, "variance")).Write();
}

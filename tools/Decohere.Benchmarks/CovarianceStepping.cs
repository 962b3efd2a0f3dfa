using BenchmarkDotNet.Attributes;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>Covariance stepping of the demo's 4×4 cavity-plus-mechanics model (target ≥ 10⁷ steps/s on one core).</summary>
[MemoryDiagnoser]
public class CovarianceStepping
{
    private const int Steps = 10_000;
    private CovarianceStepper _stepper = null!;
    private double[] _v = null!, _mean = null!, _v0 = null!;

    [GlobalSetup]
    public void Setup()
    {
        var dynamics = Dynamics.Solve(ScenarioLoader.Demo());
        int squeeze = dynamics.Scenario.StageIndex("squeeze");
        var model = dynamics.Models[squeeze];
        _stepper = new CovarianceStepper(VanLoan.Discretize(model.Drift, model.Diffusion, 10e-6));
        _v0 = dynamics.Boundaries[squeeze].Covariance.ToRowMajorArray();
        _v = (double[])_v0.Clone();
        _mean = new double[4];
    }

    [Benchmark(OperationsPerInvoke = Steps, Description = "demo 4x4: one step")]
    public double Step()
    {
        _v0.CopyTo(_v, 0);
        for (int i = 0; i < Steps; i++) _stepper.Step(_v, _mean);
        return _v[0];
    }
}

/// <summary>A 100,000-row covariance table (demo, two modes × 50,000 times) computed and written to Parquet (target &lt; 0.5 s).</summary>
[MemoryDiagnoser]
public class CovarianceTableWrite
{
    private Scenario _scenario = null!;
    private string _path = null!;

    [GlobalSetup]
    public void Setup()
    {
        var demo = ScenarioLoader.Demo();
        _scenario = demo with { OutputStepS = demo.TotalDurationS / 49_999 };
        _path = Path.Combine(Path.GetTempPath(), $"decohere-bench-{Environment.ProcessId}.parquet");
    }

    [Benchmark(Description = "demo: 100k rows to Parquet")]
    public async Task<long> ComputeAndWrite()
    {
        var dynamics = Dynamics.Solve(_scenario);
        var evolution = Evolution.Run(dynamics);
        await Decohere.Reports.CovarianceTable.WriteAsync(evolution, _path, Decohere.Core.Provenance.For(_scenario));
        return evolution.Times.Length * evolution.ModeNames.Length;
    }

    [GlobalCleanup]
    public void Cleanup() => File.Delete(_path);
}

/// <summary>Steady state plus 10,000 steps of the 40-mode chain, 80×80 (target &lt; 3 s).</summary>
public class ChainEvolution
{
    private Scenario _scenario = null!;

    [GlobalSetup]
    public void Setup() => _scenario = Files.Load("chain-40.yaml");

    [Benchmark(Description = "chain-40: steady state + 10k steps")]
    public double SteadyAndSteps()
    {
        var dynamics = Dynamics.Solve(_scenario);
        var steady = dynamics.SteadyState(0);
        var evolution = Evolution.Run(dynamics);
        return steady.Covariance[0, 0] + evolution.Moments[evolution.Times.Length - 1, 0].VarX;
    }
}

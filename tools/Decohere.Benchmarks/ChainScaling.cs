using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Reports;
using Decohere.Model;
using Decohere.Numerics;
using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Benchmarks;

/// <summary>
/// Large models: the steady state and one Van Loan step (Φ, Q over the 1 µs output step, ‖A‖₁·τ ≈ 1.8, so one doubling) of
/// chains of 40, 100 and 200 cells (state dimension n = 160, 400, 800). Targets at 200 cells: steady state ≤ 2 s, step ≤ 3 s.
/// </summary>
public class ChainScaling
{
    private Matrix<double> _drift = null!, _diffusion = null!;
    private double _step;

    [Params(40, 100, 200)]
    public int Cells { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var scenario = ChainScenario.Build(Cells);
        var model = ModelBuilder.Build(scenario, scenario.Stages[0]);
        _drift = model.Drift;
        _diffusion = model.Diffusion;
        _step = scenario.OutputStepS;
    }

    [Benchmark(Description = "chain: steady state (Lyapunov.Solve)")]
    public double SteadyState() => Lyapunov.Solve(_drift, _diffusion).Covariance[0, 0];

    [Benchmark(Description = "chain: one Van Loan step (Phi, Q)")]
    public double VanLoanStep() => VanLoan.Discretize(_drift, _diffusion, _step).Q[0, 0];

    /// <summary>Prints the median times and the exponent p of t ∝ n^p, least squares on log t against log n.</summary>
    public static void Report(Summary summary)
    {
        var rows = summary.Reports
            .Where(r => r.ResultStatistics is not null && r.BenchmarkCase.Descriptor.Type == typeof(ChainScaling))
            .Select(r => (
                Method: r.BenchmarkCase.Descriptor.WorkloadMethodDisplayInfo,
                N: 4 * (int)r.BenchmarkCase.Parameters["Cells"],
                Seconds: r.ResultStatistics!.Median / 1e9))
            .ToList();
        foreach (var group in rows.GroupBy(r => r.Method))
        {
            var points = group.OrderBy(r => r.N).ToList();
            foreach (var p in points) Console.WriteLine($"{group.Key}: n = {p.N}, median {p.Seconds:F3} s");
            if (points.Count < 2) continue;
            double mx = points.Average(p => Math.Log(p.N)), my = points.Average(p => Math.Log(p.Seconds));
            double slope = points.Sum(p => (Math.Log(p.N) - mx) * (Math.Log(p.Seconds) - my)) / points.Sum(p => Math.Pow(Math.Log(p.N) - mx, 2));
            Console.WriteLine($"{group.Key}: cost exponent {slope:F2} (t ∝ n^p, fit over n = {string.Join(", ", points.Select(p => p.N))})");
        }
    }
}

/// <summary>The blocked product C = A B of <see cref="DenseProduct"/> at n = 800 (2n³ flops per call).</summary>
public class DenseProductThroughput
{
    private Matrix<double> _a = null!, _b = null!, _c = null!;

    [Params(800)]
    public int N { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(1);
        _a = Matrix<double>.Build.Dense(N, N, (_, _) => random.NextDouble() - 0.5);
        _b = Matrix<double>.Build.Dense(N, N, (_, _) => random.NextDouble() - 0.5);
        _c = Matrix<double>.Build.Dense(N, N);
    }

    [Benchmark(Description = "DenseProduct: C = A B")]
    public double Multiply()
    {
        DenseProduct.MultiplyInto(1.0, _a, false, _b, false, 0.0, _c);
        return _c[0, 0];
    }

    /// <summary>Prints GFlop/s from the median time.</summary>
    public static void Report(Summary summary)
    {
        foreach (var r in summary.Reports.Where(r => r.ResultStatistics is not null && r.BenchmarkCase.Descriptor.Type == typeof(DenseProductThroughput)))
        {
            int n = (int)r.BenchmarkCase.Parameters["N"];
            double seconds = r.ResultStatistics!.Median / 1e9;
            Console.WriteLine($"DenseProduct n = {n}: median {seconds * 1e3:F1} ms, {2.0 * n * n * n / seconds / 1e9:F1} GFlop/s");
        }
    }
}

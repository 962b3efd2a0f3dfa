using BenchmarkDotNet.Running;
using Decohere.Benchmarks;

// dotnet run -c Release --project tools/Decohere.Benchmarks -- --filter '*' --job short
var summaries = BenchmarkSwitcher.FromAssembly(typeof(CovarianceStepping).Assembly).Run(args);
foreach (var summary in summaries)
{
    ChainScaling.Report(summary);
    DenseProductThroughput.Report(summary);
}

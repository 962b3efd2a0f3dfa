using BenchmarkDotNet.Running;
using Decohere.Benchmarks;

// dotnet run -c Release --project tools/Decohere.Benchmarks -- --filter '*' --job short
// dotnet run -c Release --project tools/Decohere.Benchmarks -- figures [run|covariance|fit|sweep|shots|job]…
if (args is ["figures", .. var names]) return Figures.Run(names);
var summaries = BenchmarkSwitcher.FromAssembly(typeof(CovarianceStepping).Assembly).Run(args);
foreach (var summary in summaries)
{
    ChainScaling.Report(summary);
    DenseProductThroughput.Report(summary);
}
return 0;

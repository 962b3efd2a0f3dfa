using BenchmarkDotNet.Running;

// dotnet run -c Release --project tools/Decohere.Benchmarks -- --filter '*' --job short
BenchmarkSwitcher.FromAssembly(typeof(Decohere.Benchmarks.CovarianceStepping).Assembly).Run(args);

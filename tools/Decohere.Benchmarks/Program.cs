BenchmarkDotNet.Running.BenchmarkSwitcher.FromAssembly(typeof(Decohere.Benchmarks.FitBenchmark).Assembly).Run(args);

using System.Diagnostics;
using System.Globalization;
using Decohere.Analyses.Check;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Benchmarks;

/// <summary>
/// The whole job as a user runs it: <c>decohere run SCENARIO --out DIR</c> on the demo with a 100,000-step covariance table
/// (200,006 rows, 5 × 2000 shots, estimates, summary, PNG and SVG plots), each call a new process, start-up included.
/// The native build (<c>dotnet publish -c Release</c> of src/Decohere.Cli), the JIT build and
/// tools/reference/run_job.py run in turn in every round, so the three see the same load on a shared machine; medians
/// of wall and CPU time and of minor page faults, and the median of the per-round ratios. Then the time of each phase
/// inside one process (JIT, warmed up), which is where the time of the job goes.
/// </summary>
public static class JobFigure
{
    /// <summary>
    /// Runs the figure: <c>figures job [--repeat N] [--native PATH] [--jit PATH.dll] [--python PATH] [--baseline PATH]</c>,
    /// the last an earlier native build to compare with, run in the same rounds.
    /// </summary>
    public static void Run(int repeat, IReadOnlyDictionary<string, string> options)
    {
        string work = Path.Combine(Path.GetTempPath(), $"decohere-figures-{Environment.ProcessId}-job");
        Directory.CreateDirectory(work);
        try
        {
            string scenario = WriteScenario(work);
            string cli = Path.Combine(Files.Root, "src", "Decohere.Cli", "bin", "Release", "net10.0");
            string native = options.GetValueOrDefault("native") ?? Path.Combine(cli, "linux-x64", "publish", "decohere");
            string jit = options.GetValueOrDefault("jit") ?? Path.Combine(cli, "decohere.dll");
            string python = options.GetValueOrDefault("python") ?? "/usr/bin/python3";
            string script = Path.Combine(Files.Root, "tools", "reference", "run_job.py");
            var programs = new List<(string Name, string File, string[] Args)>();
            if (File.Exists(native)) programs.Add(("decohere run, native", native, ["run", scenario, "--out", Path.Combine(work, "native")]));
            else Console.WriteLine($"no native build at {native} (dotnet publish -c Release src/Decohere.Cli, or --native PATH)");
            if (File.Exists(jit)) programs.Add(("decohere run, JIT", "dotnet", [jit, "run", scenario, "--out", Path.Combine(work, "jit")]));
            else Console.WriteLine($"no JIT build at {jit} (dotnet build -c Release src/Decohere.Cli, or --jit PATH)");
            if (options.GetValueOrDefault("baseline") is { } baseline)
                programs.Add(("decohere run, baseline", baseline, ["run", scenario, "--out", Path.Combine(work, "baseline")]));
            programs.Add(("numpy/scipy run_job.py", python, [script, scenario, Path.Combine(work, "numpy")]));

            var runs = Usage.Rounds([.. programs.Select(p => (p.File, p.Args))], repeat);
            var wall = runs.Select(r => r.Wall).ToArray();
            var cpu = runs.Select(r => r.Cpu).ToArray();
            var faults = runs.Select(r => r.Faults).ToArray();
            int reference = programs.Count - 1;
            for (int p = 0; p < programs.Count; p++)
            {
                var ratio = Usage.Median(wall[reference].Zip(wall[p], (r, o) => r / o));
                string paired = p == reference ? "" : string.Create(CultureInfo.InvariantCulture, $"  numpy / this, paired: {ratio:F2}x");
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"job: {programs[p].Name,-28} median {Usage.Median(wall[p]) * 1e3,8:F1} ms  best {wall[p].Min() * 1e3,8:F1} ms  cpu {Usage.Median(cpu[p]) * 1e3,8:F1} ms  page faults {Usage.Median(faults[p]),6:F0}{paired}"));
            }
            Phases(scenario, Path.Combine(work, "phases"), repeat);
        }
        finally
        {
            Directory.Delete(work, recursive: true);
        }
    }

    /// <summary>The demo's text with a 100,000-step output grid (11 ms / 110 ns).</summary>
    private static string WriteScenario(string work)
    {
        string text = File.ReadAllText(Path.Combine(Files.Root, "scenarios", "demo.yaml"));
        string path = Path.Combine(work, "demo-100k.yaml");
        File.WriteAllText(path, System.Text.RegularExpressions.Regex.Replace(text, @"step: 10 us", "step: 110 ns"));
        return path;
    }

    /// <summary>
    /// The run's phases one after the other in this process (the steps RunAnalysis and RunReport take, timed apart), then
    /// RunAnalysis and RunReport themselves (the report writes its files side by side); after one warm-up, medians.
    /// </summary>
    private static void Phases(string scenarioPath, string dir, int repeat)
    {
        var runs = new List<List<(string Name, double Seconds, double Cpu)>>();
        for (int k = 0; k <= repeat; k++)
        {
            var phases = new List<(string, double, double)>();
            long tick = Stopwatch.GetTimestamp();
            double cpu = Usage.OwnCpu();
            void Phase(string name)
            {
                long now = Stopwatch.GetTimestamp();
                double cpuNow = Usage.OwnCpu();
                phases.Add((name, Stopwatch.GetElapsedTime(tick, now).TotalSeconds, cpuNow - cpu));
                (tick, cpu) = (now, cpuNow);
            }
            var scenario = ScenarioLoader.Load(scenarioPath);
            Phase("load scenario");
            var dynamics = Dynamics.Solve(scenario);
            var check = ScenarioReport.Of(dynamics);
            Phase("engine: stages, steady states, check");
            var evolution = Evolution.Run(dynamics);
            Phase("engine: covariance on the grid");
            var provenance = Provenance.For(scenario);
            var settings = SamplerSettings.Default;
            var sampler = new ShotSampler(scenario, dynamics, settings);
            var files = new RunFiles(dir);
            QuadratureStatistics[] stats;
            var stream = files.OpenShotsAsync(sampler, provenance, default).GetAwaiter().GetResult();
            try
            {
                stats = sampler.RunAsync(stream.WriteAsync).GetAwaiter().GetResult();
                stream.CommitAsync().GetAwaiter().GetResult();
            }
            finally
            {
                stream.DisposeAsync().AsTask().GetAwaiter().GetResult();
            }
            Phase("shots: sampled, histograms, shots.parquet");
            var estimates = sampler.Delays.Select(d => ReadoutEstimator.Estimate(stats[d.Index], sampler.Chain.AddedNoise, d.Model,
                Seeds.Derive(scenario.Seed, SeedStream.Bootstrap, d.Index), settings.BootstrapResamples, settings.Confidence)).ToArray();
            Phase("estimates (bootstrap)");
            CovarianceTable.WriteAsync(evolution, Path.Combine(dir, "covariance.parquet"), provenance).GetAwaiter().GetResult();
            Phase("covariance.parquet");
            EstimatesTable.WriteAsync(Path.Combine(dir, "estimates.parquet"), sampler, estimates, settings.Confidence, provenance).GetAwaiter().GetResult();
            Phase("estimates.parquet");
            VariancePlot.Draw(evolution, Path.Combine(dir, "variance")).Write();
            Phase("variance.png/.svg");
            EstimatesPlot.Draw(evolution, sampler, estimates, Path.Combine(dir, "estimates")).Write();
            Phase("estimates.png/.svg");
            IqPlot.Draw(files.Histograms!, sampler, estimates, Path.Combine(dir, "iq")).Write();
            Phase("iq.png/.svg");
            var json = SummaryJson.Build(dynamics, check, provenance);
            json["readout"] = ReadoutSummary.Build(sampler, estimates, settings);
            SummaryJson.Write(json, Path.Combine(dir, "summary.json"));
            Phase("summary.json");
            var streams = new RunFiles(dir);
            var result = RunAnalysis.SolveAsync(scenario, new RunSettings(), streams).GetAwaiter().GetResult();
            Phase("all: RunAnalysis (engine, shots, estimates)");
            new RunReport(streams).WriteAsync(result, dir).GetAwaiter().GetResult();
            Phase("all: RunReport (tables and figures side by side)");
            if (k > 0) runs.Add(phases);
        }
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"job phases in one process (JIT, warm), medians of {repeat} (wall, and CPU of all threads): one at a time, then the run's own two steps"));
        for (int p = 0; p < runs[0].Count; p++)
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"  {runs[0][p].Name,-50} {Usage.Median(runs.Select(r => r[p].Seconds)) * 1e3,8:F1} ms  cpu {Usage.Median(runs.Select(r => r[p].Cpu)) * 1e3,8:F1} ms"));
    }
}

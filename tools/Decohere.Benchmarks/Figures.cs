using System.Diagnostics;
using System.Globalization;
using Decohere.Analyses.Fitting;
using Decohere.Analyses.Runs;
using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>
/// The figures a user waits for, each timed directly (one warm-up, then the median and best of several repetitions)
/// and printed as one line: <c>dotnet run -c Release --project tools/Decohere.Benchmarks -- figures [NAME…]</c> with
/// NAME among run, covariance, fit, sweep, shots, joint, job (all by default). tools/reference/*.py do the same work in numpy/scipy.
/// </summary>
public static class Figures
{
    // Options of one figure (`--native PATH` of job), by name without the dashes.
    private static readonly Dictionary<string, string> Options = [];

    private static readonly Dictionary<string, Action<int>> All = new()
    {
        ["run"] = WholeRun,
        ["covariance"] = CovarianceRows,
        ["fit"] = Fit,
        ["sweep"] = SweepGrid,
        ["shots"] = Shots,
        ["joint"] = JointFit,
        ["job"] = repeat => JobFigure.Run(repeat, Options),
    };

    /// <summary>Runs the named figures (all when none are named) with <paramref name="args"/> such as <c>--repeat 5</c>.</summary>
    public static int Run(string[] args)
    {
        int repeat = 5;
        var names = new List<string>();
        for (int k = 0; k < args.Length; k++)
            if (args[k] == "--repeat") repeat = int.Parse(args[++k], CultureInfo.InvariantCulture);
            else if (args[k].StartsWith("--", StringComparison.Ordinal)) Options[args[k][2..]] = args[++k];
            else names.Add(args[k]);
        foreach (var name in names.Count == 0 ? All.Keys.ToList() : names)
        {
            if (!All.TryGetValue(name, out var figure))
            {
                Console.Error.WriteLine($"unknown figure {name}; choose among {string.Join(", ", All.Keys)}");
                return 2;
            }
            figure(repeat);
        }
        return 0;
    }

    private static string Temp(string name) => Path.Combine(Path.GetTempPath(), $"decohere-figures-{Environment.ProcessId}-{name}");

    /// <summary>Wall seconds (median and best of the repetitions) and the median CPU seconds of the process per call.</summary>
    private readonly record struct Timing(double Median, double Best, double Cpu);

    // `warmups` untimed calls (one by default), then `repeat` timed calls. On a machine shared with other work the CPU time
    // is the steadier figure (it leaves out waiting for a core, not the threads the call itself runs).
    private static Timing Time(int repeat, Action body, int warmups = 1)
    {
        for (int k = 0; k < warmups; k++) body();
        var wall = new double[repeat];
        var cpu = new double[repeat];
        for (int k = 0; k < repeat; k++)
        {
            double cpu0 = Usage.OwnCpu();
            var watch = Stopwatch.StartNew();
            body();
            wall[k] = watch.Elapsed.TotalSeconds;
            cpu[k] = Usage.OwnCpu() - cpu0;
        }
        Array.Sort(wall);
        Array.Sort(cpu);
        return new Timing(wall[repeat / 2], wall[0], cpu[repeat / 2]);
    }

    private static void Print(string figure, Timing t, string rate = "") =>
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{figure,-50} median {t.Median * 1e3,8:F1} ms  best {t.Best * 1e3,8:F1} ms  cpu {t.Cpu * 1e3,8:F1} ms  {rate}"));

    /// <summary>The demo with a 100,000-step covariance table (2 modes: 200,000 rows).</summary>
    public static Scenario HundredThousandSteps()
    {
        var demo = ScenarioLoader.Demo();
        return demo with { OutputStepS = demo.Stages.Sum(s => s.DurationS) / 100_000 };
    }

    /// <summary>Whole `run` of the demo (readout shots, estimates, plots, summary) on a 100,000-step table.</summary>
    private static void WholeRun(int repeat)
    {
        var scenario = HundredThousandSteps();
        string dir = Temp("run");
        int rows = 0;
        var t = Time(repeat, () =>
        {
            var files = new RunFiles(dir);
            var result = RunAnalysis.SolveAsync(scenario, new RunSettings(), files).GetAwaiter().GetResult();
            new RunReport().WriteAsync(result, dir).GetAwaiter().GetResult();
            rows = result.Evolution.Times.Length * result.Evolution.ModeNames.Length;
        });
        Print($"run: demo, {rows:N0} covariance rows", t);
        Directory.Delete(dir, recursive: true);
    }

    /// <summary>
    /// The demo's covariance on a 100,000-step grid, engine and covariance.parquet together (the work of
    /// tools/reference/run_covariance.py), the table alone from a computed evolution, then the same columns through each
    /// codec: whether compression pays for a table of smooth doubles.
    /// </summary>
    private static void CovarianceRows(int repeat)
    {
        var scenario = HundredThousandSteps();
        var evolution = Evolution.Run(Dynamics.Solve(scenario));
        string path = Temp("covariance.parquet");
        int rows = evolution.Times.Length * evolution.ModeNames.Length;
        var engine = Time(repeat, () => CovarianceTable.WriteAsync(Evolution.Run(Dynamics.Solve(scenario)), path, Provenance.For(scenario)).GetAwaiter().GetResult());
        Print($"covariance: engine + table, {rows:N0} rows", engine, $"{rows / engine.Median / 1e6:F2} M rows/s ({rows / engine.Cpu / 1e6:F2} per CPU s)");
        var t = Time(repeat, () => CovarianceTable.WriteAsync(evolution, path, Provenance.For(scenario)).GetAwaiter().GetResult());
        Print($"covariance.parquet: {rows:N0} rows", t, $"{rows / t.Median / 1e6:F2} M rows/s ({rows / t.Cpu / 1e6:F2} per CPU s), {new FileInfo(path).Length / 1e6:F2} MB");
        var stages = scenario.Stages.Select(s => s.Name).ToArray();
        Array[] data =
        [
            Enumerable.Range(0, rows).Select(r => evolution.Times[r / 2]).ToArray(),
            Enumerable.Range(0, rows).Select(r => stages[evolution.StageOfTime[r / 2]]).ToArray(),
            Enumerable.Range(0, rows).Select(r => evolution.ModeNames[r % 2]).ToArray(),
            .. new Func<ModeMoments, double>[] { m => m.VarX, m => m.VarP, m => m.CovXP, m => m.VarMin, m => m.VarMax, m => m.AngleRad, m => m.Occupancy, m => m.SqueezingDb }
                .Select(f => Enumerable.Range(0, rows).Select(r => f(evolution.Moments[r / 2, r % 2])).ToArray()),
        ];
        foreach (var codec in new[] { ParquetCompression.None, ParquetCompression.Snappy, ParquetCompression.Zstd })
        {
            var c = Time(repeat, () => ParquetTable.WriteAsync(path, CovarianceTable.Columns, data, new Dictionary<string, string>(),
                rowGroup: CovarianceTable.GroupTimes * 2, compression: codec).GetAwaiter().GetResult());
            Print($"  same columns, {codec}", c, $"{rows / c.Median / 1e6:F2} M rows/s ({rows / c.Cpu / 1e6:F2} per CPU s), {new FileInfo(path).Length / 1e6:F2} MB");
        }
        File.Delete(path);
    }

    /// <summary>The joint fit of scenarios/joint/joint.yaml (heating curve, ring-down, cooling curve; 7 parameters), with and without profiles.</summary>
    private static void JointFit(int repeat)
    {
        string file = Path.Combine(Files.Root, "scenarios", "joint", "joint.yaml");
        var problem = Decohere.Analyses.Fitting.Joint.JointFitLoader.LoadAsync(file).GetAwaiter().GetResult();
        long evaluations = 0;
        foreach (bool profiles in new[] { true, false })
        {
            var t = Time(repeat, () => evaluations = Decohere.Analyses.Fitting.Joint.JointFitAnalysis.Solve(problem,
                new Decohere.Analyses.Fitting.Joint.JointFitSettings { Profiles = profiles }).Work.Evaluations);
            Print($"joint-fit: example, {problem.Parameters.Length} parameters{(profiles ? ", profiles" : "")}", t, $"{evaluations:N0} likelihood evaluations");
        }
    }

    /// <summary>The fit of <see cref="FitBenchmark"/>: 3 parameters, 40 delays × 10,000 shots read from CSV, with profiles.</summary>
    private static void Fit(int repeat)
    {
        var bench = new FitBenchmark();
        bench.Setup();
        FitResult? fit = null;
        // A fit calls many small methods a few times each: the JIT promotes them to optimised code only after 30 calls, so 30
        // fits warm up first (the installed program is compiled ahead of time and has no such start).
        var t = Time(repeat, () => fit = bench.ReadAndFit(), warmups: 30);
        Print("fit: 3 parameters, 40 delays x 10,000 shots (CSV)", t,
            string.Join(", ", fit!.Parameters.Select(p => string.Create(CultureInfo.InvariantCulture, $"{p.Name.Split('.')[^1]} {p.Value:G5}"))));
        // The two shares apart: a change to one is measured without the noise of the other.
        Print("  the CSV read alone (400,000 rows)", Time(repeat, () => bench.ReadOnly()));
        var alone = Time(repeat, () => fit = bench.FitOnly());
        Print("  the fit alone (per-delay statistics)", alone,
            string.Create(CultureInfo.InvariantCulture, $"{fit!.Evaluations} evaluations, {alone.Median / fit.Evaluations * 1e6:F1} us each"));
        bench.Cleanup();
    }

    /// <summary>
    /// The sweep of <see cref="SweepSteadySqueezing"/>: 20 × 20 points of steady squeezing, in parallel, with its files.
    /// A call takes milliseconds, so one warm-up would time the JIT's first, unoptimised code (tiered compilation
    /// optimises a method after 30 calls and a pause); <see cref="SweepWarmups"/> calls time the optimised code the
    /// natively compiled tool runs from the start.
    /// </summary>
    private static void SweepGrid(int repeat)
    {
        var bench = new SweepSteadySqueezing();
        bench.Setup();
        var t = Time(repeat, () => bench.Run().GetAwaiter().GetResult(), SweepWarmups);
        Print("sweep: 20 x 20 steady squeezing (store, table, plot)", t, $"{400 / t.Median:F0} points/s");
        var sweep = Sweep.Parse(ScenarioLoader.Demo(),
            ["stages.squeeze.tones[1].coupling=2kHz:24kHz:20", "modes.drum.bath.temperature=5mK:100mK:20:log"], false, "steady_squeezing_db:squeeze");
        string path = Temp("sweep.parquet");
        void PointsAndTable(int threads)
        {
            var result = SweepAnalysis.SolveAsync(sweep, new SweepSettings { Threads = threads }).GetAwaiter().GetResult();
            SweepTable.WriteAsync(path, result.Description, result.Rows, result.Metadata()).GetAwaiter().GetResult();
        }
        var table = Time(repeat, () => PointsAndTable(-1), SweepWarmups);
        Print("  the points and sweep.parquet alone", table, $"{400 / table.Median:F0} points/s");
        var serial = Time(repeat, () => PointsAndTable(1), SweepWarmups);
        Print("  the same on one thread", serial, $"{400 / serial.Median:F0} points/s");
        File.Delete(path);
        bench.Cleanup();
        SweepProcesses(repeat);
    }

    private const int SweepWarmups = 40;

    /// <summary>
    /// The sweep as a user runs it, a new process each time: the native <c>decohere sweep</c> (points, sweep.parquet and
    /// the plot as PNG and SVG) and <c>sweep.py --once</c> (the batched solve and a .npy, numpy alone imported) in turn in
    /// every round; medians of wall and CPU time and the median of the per-round ratios.
    /// </summary>
    private static void SweepProcesses(int repeat)
    {
        string native = Options.GetValueOrDefault("native")
            ?? Path.Combine(Files.Root, "src", "Decohere.Cli", "bin", "Release", "net10.0", "linux-x64", "publish", "decohere");
        if (!File.Exists(native))
        {
            Console.WriteLine($"sweep as processes: no native build at {native} (dotnet publish -c Release src/Decohere.Cli, or --native PATH)");
            return;
        }
        string dir = Temp("sweep-processes");
        (string Name, string File, string[] Args)[] programs =
        [
            ("decohere sweep, native (table, plot)", native, ["sweep", "--vary", "stages.squeeze.tones[1].coupling=2kHz:24kHz:20",
                "--vary", "modes.drum.bath.temperature=5mK:100mK:20:log", "--metrics", "steady_squeezing_db:squeeze", "--out", dir, "-q"]),
            ("sweep.py --once (batched, .npy)", Options.GetValueOrDefault("python") ?? "/usr/bin/python3",
                [Path.Combine(Files.Root, "tools", "reference", "sweep.py"), "--once", Path.Combine(dir, "sweep.npy")]),
        ];
        var runs = Usage.Rounds([.. programs.Select(p => (p.File, p.Args))], repeat);
        var wall = runs.Select(r => r.Wall).ToArray();
        var cpu = runs.Select(r => r.Cpu).ToArray();
        Directory.Delete(dir, recursive: true);
        double ratio = Usage.Median(wall[1].Zip(wall[0], (python, ours) => python / ours));
        for (int p = 0; p < programs.Length; p++)
        {
            string paired = p == 0 ? string.Create(CultureInfo.InvariantCulture, $"  numpy / this, paired: {ratio:F2}x") : "";
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"sweep as processes: {programs[p].Name,-31} median {Usage.Median(wall[p]) * 1e3,8:F1} ms  best {wall[p].Min() * 1e3,8:F1} ms  cpu {Usage.Median(cpu[p]) * 1e3,8:F1} ms{paired}"));
        }
    }

    /// <summary>
    /// Shots written per second: the writers alone on prepared batches of the sampler's size (the hand-made plain writer
    /// shots.parquet uses, and ParquetSharp uncompressed, Snappy and Zstandard with the same encodings), then sampling and
    /// writing together. A sample is one of i, q (two per shot). Rates per wall second and per CPU second (on a shared
    /// machine the second is the steadier).
    /// </summary>
    private static void Shots(int repeat)
    {
        const int shots = 10_000_000;
        var scenario = ScenarioLoader.Demo();
        var dynamics = Dynamics.Solve(scenario);
        var sampler = new ShotSampler(scenario with { Readout = scenario.Readout! with { DelaysS = [0.001] } }, dynamics, shotsPerDelay: shots);
        var batch = new ShotBatch(SamplerSettings.Default.BatchShots);
        var random = new Numerics.RandomStream(7);
        random.FillNormal(batch.I); random.FillNormal(batch.Q); random.FillNormal(batch.X); random.FillNormal(batch.P);
        string path = Temp("shots.parquet");
        (string Name, Func<Task> Write)[] writers =
        [
            ("plain writer (shots.parquet)", () => WritePlain(path, batch, shots)),
            .. new[] { ParquetCompression.None, ParquetCompression.Snappy, ParquetCompression.Zstd }
                .Select(c => ($"ParquetSharp, {c}", (Func<Task>)(() => WriteShots(path, batch, shots, c)))),
        ];
        foreach (var (name, write) in writers)
        {
            var t = Time(repeat, () => write().GetAwaiter().GetResult());
            Print($"shots writer alone: {name}", t,
                $"{2.0 * shots / t.Median / 1e6:F1} M samples/s ({2.0 * shots / t.Cpu / 1e6:F1} per CPU s), {new FileInfo(path).Length / (double)shots:F2} bytes/shot");
        }
        var whole = Time(repeat, () => SampleShots(path, sampler, Provenance.For(scenario)).GetAwaiter().GetResult());
        Print("shots: sampled and written (ShotsTable)", whole, $"{2.0 * shots / whole.Median / 1e6:F1} M samples/s ({2.0 * shots / whole.Cpu / 1e6:F1} per CPU s)");
        File.Delete(path);
    }

    private static async Task SampleShots(string path, ShotSampler sampler, Provenance provenance)
    {
        await using var table = await ShotsTable.CreateAsync(path, sampler, provenance);
        await sampler.RunAsync(table.WriteAsync);
        await table.CommitAsync();
    }

    private static async Task WritePlain(string path, ShotBatch batch, int shots)
    {
        int n = batch.I.Length;
        var shot = new long[n];
        await using var table = new PlainParquetWriter(path, ShotsTable.Columns, new Dictionary<string, string>());
        for (int first = 0; first < shots; first += n)
        {
            int rows = Math.Min(n, shots - first);
            for (int k = 0; k < rows; k++) shot[k] = first + k;
            table.WriteRowGroup(rows, [shot, new[] { 0.001 }, new[] { 0.002 }, new[] { "drum" }, batch.I, batch.Q, batch.X, batch.P]);
        }
        await table.CommitAsync();
    }

    // The columns of shots.parquet from one prepared batch, repeated, through ParquetSharp: the shot counter as deltas,
    // the constant columns as dictionaries (the sizes of the plain writer's file), the compression under test.
    private static async Task WriteShots(string path, ShotBatch batch, int shots, ParquetCompression compression)
    {
        int n = batch.I.Length;
        var shot = new long[n];
        ColumnSpec[] columns =
        [
            ColumnSpec.Long("shot") with { Delta = true }, ColumnSpec.Double("delay_s") with { Dictionary = true },
            ColumnSpec.Double("time_s") with { Dictionary = true }, ColumnSpec.String("mode"), .. ShotsTable.Columns[4..],
        ];
        await using var table = await ParquetTable.CreateAsync(path, columns, new Dictionary<string, string>(), default, compression);
        for (int first = 0; first < shots; first += n)
        {
            int rows = Math.Min(n, shots - first);
            for (int k = 0; k < rows; k++) shot[k] = first + k;
            table.WriteRowGroup(rows, [shot, new[] { 0.001 }, new[] { 0.002 }, new[] { "drum" }, batch.I, batch.Q, batch.X, batch.P]);
        }
        await table.CommitAsync();
    }
}

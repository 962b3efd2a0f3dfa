using Decohere.Analyses.Runs;
using Decohere.Analyses.Sweeps;
using Decohere.Analyses.Tolerance;
using Decohere.Core;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Analyses;

/// <summary>
/// The rows, memory and disk each large command needs, from its scenario and settings alone (nothing is solved), so that
/// a command beyond its <see cref="ResourceLimits"/> is refused in milliseconds. Bytes per row were measured with
/// <c>/usr/bin/time -v</c> (peak resident set) and the file sizes on the demo scenario, then rounded up: a run holds
/// about 300 bytes per covariance-table row (moments, grid, the plot's copies), its covariance.parquet takes under
/// 80 bytes a row, shots.parquet 41 bytes a shot.
/// </summary>
public static class ResourceEstimates
{
    /// <summary>Memory per covariance-table row (time × mode) held by a run (measured 295 B a row between 1.6e6 and 4.8e6 rows, 320 B at 1.7e7).</summary>
    public const double CovarianceRowMemory = 330;

    /// <summary>Bytes per covariance-table row on disk (nine 8-byte values, uncompressed, and the dictionary indices).</summary>
    public const double CovarianceRowDisk = 80;

    /// <summary>Bytes of the vector plot per output time and mechanical mode (two lines of points; measured 16 B a point).</summary>
    public const double PlotPointDisk = 32;

    /// <summary>Bytes per shot in shots.parquet (measured 40.6 B).</summary>
    public const double ShotDisk = 41;

    /// <summary>Bytes per trajectory row (trajectory, time, mode, x, p) on disk.</summary>
    public const double TrajectoryRowDisk = 34;

    /// <summary>Bytes per trajectory row in the writer's column buffers (five columns, one a 16-byte string slice).</summary>
    public const double TrajectoryRowMemory = 48;

    /// <summary>The number of output times of the covariance grid (t = 0, every step inside a stage, every stage end), without building it.</summary>
    public static double GridTimes(Scenario scenario) => 1 + scenario.Stages.Sum(s => Math.Ceiling(s.DurationS / scenario.OutputStepS));

    /// <summary><c>run</c>: the covariance table (and its plot), the shots, the trajectories.</summary>
    public static ResourceEstimate Run(Scenario scenario, RunSettings settings)
    {
        var sampler = settings.Sampler ?? SamplerSettings.Default;
        double times = GridTimes(scenario);
        int modes = scenario.Modes.Length;
        int mechanical = scenario.Modes.Count(m => m.Kind == ModeKind.Mechanical);
        var parts = new List<ResourcePart>
        {
            new($"covariance table ({ResourceLimits.Count(times)} output times × {modes} modes; output.step {Quantity.Format(scenario.OutputStepS, Dimension.Time)})",
                times * modes, times * modes * CovarianceRowMemory, times * (modes * CovarianceRowDisk + mechanical * PlotPointDisk)),
        };
        if (scenario.Readout is { } readout)
        {
            double shots = (double)readout.Shots * readout.DelaysS.Length;
            // Two batches of (i, q, x, p) are held while one is written.
            parts.Add(new($"shots ({readout.DelaysS.Length} delays × {readout.Shots} shots)", shots,
                2.0 * Math.Min(sampler.BatchShots, readout.Shots) * 4 * sizeof(double), shots * ShotDisk));
        }
        if (settings.Trajectories > 0)
        {
            int recorded = scenario.Readout is null ? mechanical : 1;
            int components = 2 * recorded, state = 2 * modes;
            double batch = TrajectorySampler.BatchTrajectories(settings.Trajectories, (int)Math.Min(times, int.MaxValue), components, sampler);
            int threads = sampler.MaxDegreeOfParallelism is > 0 and var m ? m : Environment.ProcessorCount;
            double rows = settings.Trajectories * times * recorded;
            // Two sample buffers, the writer's row arrays for one batch, and each thread's deviates for one trajectory.
            double memory = 2 * batch * times * components * sizeof(double) + batch * times * recorded * TrajectoryRowMemory
                + threads * state * times * sizeof(double);
            parts.Add(new($"trajectories ({settings.Trajectories} × {ResourceLimits.Count(times)} output times × {recorded} mode{(recorded == 1 ? "" : "s")})",
                rows, memory, rows * TrajectoryRowDisk));
        }
        return new ResourceEstimate("the run", [.. parts]);
    }

    /// <summary><c>sweep</c>: one row per point held in memory, written to chunk files and the table.</summary>
    public static ResourceEstimate Sweep(Sweep sweep, SweepSettings settings)
    {
        double points = settings.Shard is { } shard ? shard.PointsIn(sweep.Grid.PointCount) : sweep.Grid.PointCount;
        int axes = sweep.Grid.Axes.Length, metrics = sweep.Metrics.Length;
        // A row object with its parameter and nullable-metric arrays; on disk its columns twice (chunks, then the table).
        double memory = 200 + 16.0 * axes + 32.0 * metrics, disk = 2 * (16 + 8.0 * (axes + metrics) + 16);
        return new ResourceEstimate("the sweep", [new($"sweep table ({ResourceLimits.Count(points)} points × {metrics} metrics)", points, points * memory, points * disk)]);
    }

    /// <summary><c>tolerance</c>: one row per (added noise, shots) point; the Monte Carlo draws are counted, not held.</summary>
    public static ResourceEstimate Tolerance(ToleranceSettings settings)
    {
        double points = (double)settings.AddedNoise.Length * settings.Shots.Length;
        string draws = settings.CalibrationUncertainty is null ? "" : $", {ResourceLimits.Count(points * settings.Draws)} Monte Carlo draws";
        return new ResourceEstimate("the tolerance map", [new($"tolerance grid ({ResourceLimits.Count(points)} points{draws})", points, points * 150, points * 48)]);
    }
}

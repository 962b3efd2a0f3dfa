using Decohere.Analyses.Runs;
using Decohere.Analyses.Sweeps;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Scenarios;

namespace Decohere.Tests.Reports;

/// <summary>An analysis and its report in one call, as the commands chain them, for tests that check the files.</summary>
public static class WriteThrough
{
    /// <summary>Runs a scenario streaming into <paramref name="directory"/> and writes its report; returns the result and every path.</summary>
    public static async Task<(RunResult Result, IReadOnlyList<string> Paths)> RunAsync(Scenario scenario, string directory,
        RunSettings? settings = null, CancellationToken cancel = default)
    {
        var owned = OutputDirectory.Claim(directory, OutputSet.Run);
        var files = new RunFiles(directory);
        var result = await RunAnalysis.SolveAsync(scenario, settings, files, cancel: cancel);
        IReadOnlyList<string> paths = [.. await new RunReport().WriteAsync(result, directory, cancel), .. files.Paths];
        owned.Record(paths);
        return (result, paths);
    }

    /// <summary>Runs a sweep (or a shard) with its chunk files in <paramref name="directory"/> and writes its table.</summary>
    public static async Task<SweepResult> SweepAsync(Sweep sweep, string directory, SweepSettings? settings = null, CancellationToken cancel = default)
    {
        var result = await SweepAnalysis.SolveAsync(sweep, settings ?? new SweepSettings(), new SweepChunkStore(directory), cancel);
        await new SweepReport().WriteAsync(result, directory, cancel);
        return result;
    }

    /// <summary>Reads the part files in <paramref name="directory"/>, merges them and writes sweep.parquet.</summary>
    public static async Task<SweepResult> MergeAsync(string directory, CancellationToken cancel = default)
    {
        var result = SweepMerge.Solve(await SweepTable.ReadPartsAsync(directory, cancel), directory);
        await new SweepReport().WriteAsync(result, directory, cancel);
        return result;
    }
}

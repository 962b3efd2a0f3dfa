using System.Security.Cryptography;
using Decohere.Analyses.Runs;
using Decohere.Sampling;
using Decohere.Scenarios;
using Decohere.Tests.Reports;

namespace Decohere.Tests.Sampling;

/// <summary>The files a seeded run writes are the same bytes whatever the number of worker threads.</summary>
public class DeterminismTests
{
    [Fact]
    public async Task ShotsAndTrajectoriesAreByteIdenticalForOneAndSeveralWorkers()
    {
        // A coarse grid (56 times) and 2500 trajectories: several row groups of trajectories, several batches of shots.
        var scenario = ScenarioLoader.Parse(ScenarioLoader.DemoText.Replace("step: 10 us", "step: 200 us"), "demo.yaml");
        string[] hashes = new string[3];
        int[] workers = [1, 3, 8];
        for (int k = 0; k < workers.Length; k++)
        {
            var dir = Directory.CreateTempSubdirectory("decohere-determinism-");
            try
            {
                var settings = new RunSettings(2500, new SamplerSettings(MaxDegreeOfParallelism: workers[k], BatchShots: 1 << 12));
                await WriteThrough.RunAsync(scenario, dir.FullName, settings);
                hashes[k] = string.Join(",", new[] { "trajectories.parquet", "shots.parquet", "estimates.parquet", "covariance.parquet" }
                    .Select(f => Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(Path.Combine(dir.FullName, f))))));
            }
            finally { dir.Delete(recursive: true); }
        }
        Assert.Equal(hashes[0], hashes[1]);
        Assert.Equal(hashes[0], hashes[2]);
    }

    [Fact]
    public void TrajectoryBatchesDependOnTheSettingsAndSizesOnly()
    {
        // The batch is one row group: it may not follow the processor count, or the file's layout would.
        var one = new SamplerSettings(MaxDegreeOfParallelism: 1);
        var many = new SamplerSettings(MaxDegreeOfParallelism: 64);
        foreach (var (count, times) in new[] { (2500L, 56), (10L, 2201), (100_000L, 2201), (5L, 10_000_000) })
        {
            long batch = TrajectorySampler.BatchTrajectories(count, times, 2, one);
            Assert.Equal(batch, TrajectorySampler.BatchTrajectories(count, times, 2, many));
            Assert.Equal(0, batch % one.BlockTrajectories);
        }
    }
}

using Decohere.Analyses;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Tests.Core;

public class ResourceEstimateTests
{
    [Theory]
    [InlineData("8GiB", 8L << 30)]
    [InlineData("8 GiB", 8L << 30)]
    [InlineData("500MB", 500_000_000L)]
    [InlineData("1.5 kB", 1500L)]
    [InlineData("2e9", 2_000_000_000L)]
    [InlineData("3T", 3L << 40)]
    public void SizesParseInBinaryAndDecimalUnits(string text, long bytes) =>
        Assert.Equal(bytes, ResourceLimits.ParseSize(text, "memory limit"));

    [Theory]
    [InlineData("8 parsecs")]
    [InlineData("-1GiB")]
    [InlineData("0")]
    [InlineData("lots")]
    public void BadSizesAreRefusedNamingTheSetting(string text) =>
        Assert.StartsWith("memory limit:", Assert.Throws<InputException>(() => ResourceLimits.ParseSize(text, "memory limit")).Message);

    [Fact]
    public void TheGridCountMatchesTheEngineGrid()
    {
        // The estimate counts the output grid without building it; the engine's grid is the reference.
        foreach (string step in new[] { "10 us", "7 us", "1 ms" })
        {
            var s = ScenarioLoader.Parse(ScenarioLoader.DemoText.Replace("step: 10 us", "step: " + step), "demo.yaml");
            int engine = Decohere.Engine.Dynamics.Solve(s).OutputGrid().Times.Length;
            Assert.InRange(ResourceEstimates.GridTimes(s), engine - s.Stages.Length, engine + s.Stages.Length);
        }
    }

    [Fact]
    public void TheDemoIsFarInsideTheDefaultLimits()
    {
        var e = ResourceEstimates.Run(ScenarioLoader.Demo(), new RunSettings(100));
        e.Enforce(ResourceLimits.Default);
        // Measured peak resident set of this run: about 95 MB (/usr/bin/time -v); the estimate is an upper bound.
        Assert.InRange(e.MemoryBytes, 95e6, 1e9);
    }

    [Fact]
    public void ALongStageAtAFineStepIsRefusedNamingTheTableAndTheLimit()
    {
        // 42 s at 5 µs: 8.4e6 output times × 2 modes; measured peak 5.6 GB resident (/usr/bin/time -v), 1 min 45 s.
        var s = ScenarioLoader.Parse(ScenarioLoader.DemoText.Replace("duration: 8 ms", "duration: 42 s").Replace("step: 10 us", "step: 5 us"), "long.yaml");
        var e = ResourceEstimates.Run(s, new RunSettings());
        Assert.InRange(e.MemoryBytes, 5.0e9, 6.5e9);
        var error = Assert.Throws<InputException>(() => e.Enforce(ResourceLimits.Default));
        Assert.StartsWith("memory limit:", error.Message);
        Assert.Contains("covariance table", error.Message);
        Assert.Contains("GiB", error.Message);
        e.Enforce(ResourceLimits.None);
        e.Enforce(new ResourceLimits(8L << 30, null));
    }

    [Fact]
    public void DataFilesCostTheirUsedColumnsOnly()
    {
        // 1e7 shots, 3 columns used: 240 MB, well inside 4 GiB; 1e8 variance rows keep an observation each and are refused.
        var shots = FitDataReader.Estimate("shots.csv", 10_000_000, 3, 0, 0);
        Assert.Equal(240e6, shots.Parts[0].MemoryBytes, 1e-9);
        shots.Enforce(ResourceLimits.Default);
        Assert.Throws<InputException>(() => FitDataReader.Estimate("v.csv", 100_000_000, 4, 0, FitDataReader.ObservationBytes).Enforce(ResourceLimits.Default));
    }
}

using Decohere.Tests.Reports;
using System.Text.Json.Nodes;
using Decohere.Analyses.Runs;
using Decohere.IO;
using Decohere.Scenarios;
using Decohere.Tests.Cli;
using Decohere.Tests.Sampling;
using Decohere.Tests.Scenarios;

namespace Decohere.Tests.IO;

public class OutputDirectoryTests
{
    [Theory]
    [InlineData("../../x")]
    [InlineData("/tmp/x")]
    [InlineData("a/b")]
    [InlineData("a\\\\b")]
    [InlineData("..")]
    [InlineData(".")]
    [InlineData(".hidden")]
    [InlineData("C:x")]
    [InlineData("a\\u0007b")]
    [InlineData("a\\nb")]
    [InlineData("NUL")]
    [InlineData("trailing.")]
    [InlineData("star*")]
    public void ALoaderRefusesANameThatIsAPath(string name)
    {
        string yaml = ScenarioLoaderTests.Minimal.Replace("name: t", $"name: \"{name}\"");
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml, "test.yaml"));
        var problem = Assert.Single(e.Problems);
        Assert.Equal("name", problem.Path);
        Assert.Equal((1, 7), (problem.Line, problem.Column));
        Assert.Contains("--out", problem.Message);
    }

    [Theory]
    [InlineData("demo-drum")]
    [InlineData("run 3 (cold)")]
    [InlineData("v1.2_final+fix")]
    [InlineData("Trommel-Kühlung")]
    public void APlainNameIsAccepted(string name) =>
        Assert.Equal(name, ScenarioLoader.Parse(ScenarioLoaderTests.Minimal.Replace("name: t", $"name: {name}")).Name);

    [Fact]
    public void AClaimRemovesOnlyTheCommandsOwnStaleOutputsAndTemporaryFiles()
    {
        string dir = TestPaths.NewTempDirectory();
        string[] mine = ["shots.parquet", "summary.json", "shots.parquet.partial-123-abc", "covariance.parquet.partial-9-f"];
        string[] others = ["notes.txt", "lifetime.json", "my-shots.parquet", "lifetime.png.partial-1-2", "summary.json.bak"];
        foreach (var f in mine.Concat(others)) File.WriteAllText(Path.Combine(dir, f), "old");
        Directory.CreateDirectory(Path.Combine(dir, "estimates.png"));

        OutputDirectory.Claim(dir, OutputSet.Run);

        foreach (var f in mine) Assert.False(File.Exists(Path.Combine(dir, f)), f);
        foreach (var f in others) Assert.True(File.Exists(Path.Combine(dir, f)), f);
        // A directory under an output's name is not ours to delete; the write that needs the name fails instead.
        Assert.True(Directory.Exists(Path.Combine(dir, "estimates.png")));
    }

    [Fact]
    public async Task ARunWithoutReadoutLeavesNoShotsOfTheRunBeforeAndRecordsWhatItWrote()
    {
        string dir = TestPaths.NewTempDirectory();
        await WriteThrough.RunAsync(SamplingScenarios.Thermal(shots: 200), dir);
        File.WriteAllText(Path.Combine(dir, "notes.txt"), "mine");
        var lifetimeEntry = OutputDirectory.Claim(dir, OutputSet.Lifetime);
        lifetimeEntry.Record([]);
        Assert.True(File.Exists(Path.Combine(dir, "shots.parquet")));

        var withoutReadout = SamplingScenarios.Thermal(shots: 200) with { Readout = null };
        var written = await WriteThrough.RunAsync(withoutReadout, dir);

        Assert.False(File.Exists(Path.Combine(dir, "shots.parquet")));
        Assert.False(File.Exists(Path.Combine(dir, "estimates.parquet")));
        Assert.True(File.Exists(Path.Combine(dir, "notes.txt")));
        var manifest = OutputDirectory.ReadManifest(dir);
        Assert.Equal(["covariance.parquet", "summary.json", "variance.png", "variance.svg"], manifest["run"].Order(StringComparer.Ordinal));
        Assert.Equal(written.Paths.Select(Path.GetFileName).Order(StringComparer.Ordinal), manifest["run"].Order(StringComparer.Ordinal));
        Assert.Empty(manifest["lifetime"]);
        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(dir, OutputDirectory.ManifestName)))!;
        Assert.Equal(new FileInfo(Path.Combine(dir, "covariance.parquet")).Length,
            (long)json["commands"]!["run"]!["files"]!.AsArray().Single(f => (string?)f!["name"] == "covariance.parquet")!["bytes"]!);
    }

    [Fact]
    public void TheCliRefusesAPathAsANameWithExitCode2AndWritesNothing()
    {
        string dir = TestPaths.NewTempDirectory();
        string work = Path.Combine(dir, "a", "b");
        Directory.CreateDirectory(work);
        File.WriteAllText(Path.Combine(work, "s.yaml"), ScenarioLoaderTests.Minimal.Replace("name: t", "name: ../../escaped"));
        var result = CliProcess.Run(work, "run", "s.yaml");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("name (line 1, column 7)", result.Stderr);
        Assert.False(Directory.Exists(Path.Combine(dir, "escaped")));
        Assert.False(Directory.Exists(Path.Combine(work, "results")));
    }
}

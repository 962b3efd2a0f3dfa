using System.CommandLine;
using Decohere.Cli.Commands;
using CliApp = Decohere.Cli.Commands.Cli;

namespace Decohere.Tests.Cli;

/// <summary>Commands that would need more memory or disk than their limits are refused before they start, with the options to change the limits.</summary>
public class ResourceLimitTests
{
    private static async Task<(int Code, string Error)> Invoke(params string[] args)
    {
        var error = new StringWriter();
        var console = AppConsole.Capture(TextWriter.Null, error);
        var root = new RootCommand("test");
        root.Subcommands.Add(RunCommand.Create(console));
        root.Subcommands.Add(SweepCommand.Create(console));
        root.Subcommands.Add(ToleranceCommand.Create(console));
        int code = await CliApp.InvokeAsync(root, args, console);
        return (code, error.ToString());
    }

    private static string Scenario(string dir, string from, string to)
    {
        string path = Path.Combine(dir, "s.yaml");
        File.WriteAllText(path, Decohere.Scenarios.ScenarioLoader.DemoText.Replace(from, to));
        return path;
    }

    [Fact]
    public async Task ALongStageAtAFineStepIsRefusedBeforeAnyFileIsWritten()
    {
        string dir = TestPaths.NewTempDirectory();
        try
        {
            string s = Scenario(dir, "duration: 8 ms", "duration: 42 s");
            File.WriteAllText(s, File.ReadAllText(s).Replace("step: 10 us", "step: 5 us"));
            string output = Path.Combine(dir, "out");
            var (code, error) = await Invoke("run", s, "--out", output);
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("--max-memory", error);
            Assert.Contains("--force", error);
            Assert.Contains("covariance table", error);
            Assert.False(Directory.Exists(output));
        }
        finally { Directory.Delete(dir, recursive: true); }
    }

    [Fact]
    public async Task ASubNanosecondStepIsRefused()
    {
        string dir = TestPaths.NewTempDirectory();
        try
        {
            // 0.25 ns over 11 ms: 4.4e7 output times, inside the loader's 5e7, but 29 GB of table.
            var (code, error) = await Invoke("run", Scenario(dir, "step: 10 us", "step: 0.25 ns"), "--out", Path.Combine(dir, "out"));
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("--max-memory", error);
            // A larger memory limit lets the memory pass; a small disk limit then holds it, and --max-disk is named.
            (code, error) = await Invoke("run", Path.Combine(dir, "s.yaml"), "--max-memory", "64GiB", "--max-disk", "1GiB", "--out", Path.Combine(dir, "out"));
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("--max-disk", error);
        }
        finally { Directory.Delete(dir, recursive: true); }
    }

    [Fact]
    public async Task TooManyTrajectoriesAndSweepPointsAreRefused()
    {
        string dir = TestPaths.NewTempDirectory();
        try
        {
            string demo = Scenario(dir, "seed:", "seed:");
            var (code, error) = await Invoke("run", demo, "--trajectories", "1000000", "--out", Path.Combine(dir, "t"));
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("trajectories", error);
            (code, error) = await Invoke("sweep", demo, "--vary", "modes.drum.bath.temperature=5mK:50mK:100000",
                "--vary", "modes.drum.linewidth=0.1Hz:1Hz:10000", "--out", Path.Combine(dir, "w"));
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("sweep table", error);
            (code, error) = await Invoke("run", demo, "--max-memory", "8 parsecs");
            Assert.Equal(CliApp.BadInput, code);
            Assert.Contains("--max-memory", error);
        }
        finally { Directory.Delete(dir, recursive: true); }
    }
}

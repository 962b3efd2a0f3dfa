using System.CommandLine;
using Decohere.Cli.Commands;

using CliApp = Decohere.Cli.Commands.Cli;

namespace Decohere.Tests.Cli;

/// <summary>The injected console and the mapping of the library's setting names to options.</summary>
public class AppConsoleTests
{
    [Theory]
    [InlineData("threshold: 70 dB is out of range", "--threshold: 70 dB is out of range")]
    [InlineData("reference stage: unknown stage 'x'", "--after: unknown stage 'x'")]
    [InlineData("data file /a.csv: not found", "--data /a.csv: not found")]
    [InlineData("thresholds are fine", "thresholds are fine")]
    [InlineData("stage 'x' has no tones", "stage 'x' has no tones")]
    public void MessagesThatStartWithASettingNameTheOption(string message, string shown)
    {
        var flags = new Dictionary<string, string> { ["threshold"] = "--threshold", ["reference stage"] = "--after", ["data file"] = "--data" };
        Assert.Equal(shown, CliApp.AsOption(message, flags));
    }

    [Fact]
    public async Task CommandsWithTheirOwnConsolesRunSideBySide()
    {
        // Two in-process commands at once: each console receives only its own command's output.
        var outputs = Enumerable.Range(0, 2).Select(_ => (Out: new StringWriter(), Err: new StringWriter())).ToArray();
        string[] stages = ["release", "nowhere"];
        var runs = Enumerable.Range(0, 2).Select(k => Task.Run(() =>
        {
            var console = AppConsole.Capture(outputs[k].Out, outputs[k].Err);
            var root = new RootCommand("test") { LifetimeCommand.Create(console) };
            string dir = TestPaths.NewTempDirectory();
            return CliApp.InvokeAsync(root, ["lifetime", "--after", stages[k], "--out", dir, "-q"], console);
        })).ToArray();
        int[] codes = await Task.WhenAll(runs);
        Assert.Equal(CliApp.Ok, codes[0]);
        Assert.Equal(CliApp.BadInput, codes[1]);
        Assert.Contains("lifetime.json", outputs[0].Out.ToString());
        Assert.Empty(outputs[0].Err.ToString());
        Assert.Contains("--after: unknown stage 'nowhere'", outputs[1].Err.ToString());
        Assert.DoesNotContain("lifetime.json", outputs[1].Out.ToString());
    }
}

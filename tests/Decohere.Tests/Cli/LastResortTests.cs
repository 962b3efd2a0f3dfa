using System.CommandLine;
using Commands = Decohere.Cli.Commands;

namespace Decohere.Tests.Cli;

/// <summary>A failure no command anticipated ends in one line on stderr and exit code 1, never a stack trace.</summary>
public sealed class LastResortTests
{
    private static async Task<(int Code, string Stderr)> Invoke(Func<Task<int>> action)
    {
        var command = new Command("boom");
        command.SetAction((_, _) => action());
        var root = new RootCommand("test") { command };
        var err = new StringWriter();
        return (await Commands.Cli.InvokeAsync(root, ["boom"], Commands.AppConsole.Capture(new StringWriter(), err)), err.ToString());
    }

    [Fact]
    public async Task AnUnexpectedExceptionIsOneLineAndExitCode1()
    {
        var (code, stderr) = await Invoke(() => throw new InvalidCastException("Unable to cast\n   at Some.Frame()"));
        Assert.Equal(Commands.Cli.Failure, code);
        string line = Assert.Single(stderr.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.StartsWith("error: internal failure (InvalidCastException: Unable to cast)", line);
        Assert.DoesNotContain(" at ", line);
    }

    [Fact]
    public async Task AnExceptionInsideGuardIsCaughtToo()
    {
        var (code, stderr) = await Invoke(() => Commands.Cli.Guard(Commands.AppConsole.Capture(new StringWriter(), new StringWriter()), null, () => throw new ArgumentException(new string('x', 5000))));
        Assert.Equal(Commands.Cli.Failure, code);
        string line = Assert.Single(stderr.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.True(line.Length < 500, "a long message is cut");
    }

    [Fact]
    public void TheCliNeverPrintsAStackTraceForACrashingInput()
    {
        // Before the loader refused complex keys, this input crashed with an InvalidCastException and a stack trace.
        string dir = TestPaths.NewTempDirectory();
        File.WriteAllText(Path.Combine(dir, "s.yaml"), "name: t\nmodes:\n  ? [drum]\n  : { kind: mechanical }\nstages: []\n");
        var result = CliProcess.Run(dir, "check", "s.yaml");
        Assert.Equal(2, result.ExitCode);
        Assert.DoesNotContain("   at ", result.Stderr);
    }
}

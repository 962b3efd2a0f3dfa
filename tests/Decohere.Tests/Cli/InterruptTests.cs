using System.Diagnostics;
using System.Runtime.InteropServices;

namespace Decohere.Tests.Cli;

public class InterruptTests
{
    // POSIX kill(2): .NET can send SIGKILL only, and the test needs the signals a user and a scheduler send.
    [DllImport("libc", EntryPoint = "kill", SetLastError = true)]
    private static extern int Kill(int pid, int signal);

    [Theory]
    [InlineData(2)]    // SIGINT, as Ctrl-C sends
    [InlineData(15)]   // SIGTERM, as a batch scheduler sends at a time limit
    public async Task AStoppedRunExitsWith130AndLeavesNoPartialFile(int signal)
    {
        if (!OperatingSystem.IsLinux() && !OperatingSystem.IsMacOS()) return;
        string dir = TestPaths.NewTempDirectory();
        string scenario = Path.Combine(dir, "big.yaml");
        File.WriteAllText(scenario, Decohere.Scenarios.ScenarioLoader.DemoText.Replace("shots: 2000 ", "shots: 50000000 "));
        string output = Path.Combine(dir, "out");
        var info = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var a in new[] { Path.Combine(AppContext.BaseDirectory, "decohere.dll"), "run", scenario, "--out", output, "-q" })
            info.ArgumentList.Add(a);
        using var process = Process.Start(info)!;
        try
        {
            await StopAndCheck(process, output, signal);
        }
        finally
        {
            // A run that ignored the signal would go on writing gigabytes: never leave it behind.
            if (!process.HasExited) process.Kill(entireProcessTree: true);
            Directory.Delete(dir, recursive: true);
        }
    }

    private static async Task StopAndCheck(Process process, string output, int signal)
    {
        var stderr = process.StandardError.ReadToEndAsync();
        _ = process.StandardOutput.ReadToEndAsync();
        // Wait until the shots are being written, then stop the run.
        var clock = Stopwatch.StartNew();
        while (!(Directory.Exists(output) && Directory.GetFiles(output, "shots.parquet.partial-*").Length > 0) && clock.Elapsed.TotalSeconds < 60)
            await Task.Delay(50);
        Assert.True(clock.Elapsed.TotalSeconds < 60, "the run never started writing shots");
        Assert.Equal(0, Kill(process.Id, signal));
        Assert.True(process.WaitForExit(60_000), "the run did not stop");
        Assert.Equal(130, process.ExitCode);
        Assert.Contains("stopped", await stderr);
        Assert.Empty(Directory.GetFiles(output, "*.partial-*"));
        Assert.False(File.Exists(Path.Combine(output, "shots.parquet")));
        // The report writes only a finished run's result: a stopped run leaves no summary that would describe missing shots.
        Assert.False(File.Exists(Path.Combine(output, "summary.json")));
    }
}

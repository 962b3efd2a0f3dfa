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

    [Fact]
    public async Task AFitOnAHostileVariancesFileStopsWithinASecondOfSigterm()
    {
        if (!OperatingSystem.IsLinux() && !OperatingSystem.IsMacOS()) return;
        string dir = TestPaths.NewTempDirectory();
        // 200 000 distinct delays: every likelihood evaluation walks 200 000 states, each with its own exact step,
        // and the fit would run for hours; it must notice the signal between delays, not after an evaluation.
        string data = Path.Combine(dir, "hostile.csv");
        using (var w = new StreamWriter(data))
        {
            w.WriteLine("delay_s,var_i,var_q,shots");
            for (int r = 0; r < 200_000; r++)
                w.WriteLine(FormattableString.Invariant($"{0.008 * (r + 0.5) / 200_000:R},{2.0 + (r % 7) * 0.01},{2.1 - (r % 5) * 0.01},1000"));
        }
        string scenario = Path.Combine(dir, "demo.yaml");
        File.WriteAllText(scenario, Decohere.Scenarios.ScenarioLoader.DemoText);
        var info = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var a in new[] { Path.Combine(AppContext.BaseDirectory, "decohere.dll"), "fit", scenario, "--data", data, "--out", Path.Combine(dir, "out"), "-q" })
            info.ArgumentList.Add(a);
        using var process = Process.Start(info)!;
        try
        {
            var stderr = process.StandardError.ReadToEndAsync();
            _ = process.StandardOutput.ReadToEndAsync();
            // Past start-up and reading (under a second), into the optimiser.
            Assert.False(process.WaitForExit(4000), "the fit ended before it could be stopped");
            var clock = Stopwatch.StartNew();
            Assert.Equal(0, Kill(process.Id, 15));
            Assert.True(process.WaitForExit(10_000), "the fit did not stop");
            // A second is the requirement; the margin absorbs the process's own exit on a loaded machine.
            Assert.True(clock.Elapsed.TotalSeconds < 1.5, $"the fit stopped {clock.Elapsed.TotalSeconds:F2} s after SIGTERM");
            Assert.Equal(130, process.ExitCode);
            Assert.Contains("stopped", await stderr);
            Assert.False(File.Exists(Path.Combine(dir, "out", "fit.json")));
        }
        finally
        {
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

using System.Diagnostics;
using System.Runtime.InteropServices;

namespace Decohere.Benchmarks;

/// <summary>
/// Resource use from the kernel's accounts (getrusage, to the microsecond; .NET's process times on Linux count 10 ms
/// clock ticks): this process's CPU time, and a child process's wall time, CPU time and minor page faults.
/// </summary>
internal static class Usage
{
    /// <summary>CPU seconds (user + system) of this process, all threads.</summary>
    public static double OwnCpu()
    {
        var usage = new RUsage { Rest = new long[14] };
        if (!OperatingSystem.IsLinux() || getrusage(0, ref usage) != 0) return double.NaN;   // RUSAGE_SELF
        return Seconds(usage);
    }

    /// <summary>
    /// Runs a process to its end: its wall time, its CPU time (user + system) and its minor page faults (each first
    /// touch of a page of memory, a few µs of kernel time that no load on the machine changes).
    /// </summary>
    /// <exception cref="InvalidOperationException">The process exits with a code other than 0.</exception>
    public static (double Wall, double Cpu, double Faults) Process(string file, string[] args)
    {
        var start = new ProcessStartInfo(file) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var a in args) start.ArgumentList.Add(a);
        var (cpu0, faults0) = Children();
        var watch = Stopwatch.StartNew();
        using var process = System.Diagnostics.Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        process.WaitForExit();
        double wall = watch.Elapsed.TotalSeconds;
        if (process.ExitCode != 0)
            throw new InvalidOperationException($"{file} {string.Join(' ', args)} exited with {process.ExitCode}: {error.Result}{output.Result}");
        var (cpu1, faults1) = Children();
        return (wall, cpu1 - cpu0, faults1 - faults0);
    }

    /// <summary>
    /// Runs every program once a round, in turn, so that all see the same load on a shared machine; a first round, not
    /// counted, warms the disk cache. Per program: the wall times, CPU times and page faults of the counted rounds.
    /// </summary>
    public static (double[] Wall, double[] Cpu, double[] Faults)[] Rounds(IReadOnlyList<(string File, string[] Args)> programs, int repeat)
    {
        var runs = programs.Select(_ => (Wall: new double[repeat], Cpu: new double[repeat], Faults: new double[repeat])).ToArray();
        for (int round = -1; round < repeat; round++)
            for (int p = 0; p < programs.Count; p++)
            {
                var (wall, cpu, faults) = Process(programs[p].File, programs[p].Args);
                if (round < 0) continue;
                (runs[p].Wall[round], runs[p].Cpu[round], runs[p].Faults[round]) = (wall, cpu, faults);
            }
        return runs;
    }

    /// <summary>The middle value (the upper of the two middle ones for an even count).</summary>
    public static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToArray();
        return sorted[sorted.Length / 2];
    }

    private static (double Cpu, double Faults) Children()
    {
        var usage = new RUsage { Rest = new long[14] };
        if (!OperatingSystem.IsLinux() || getrusage(-1, ref usage) != 0) return (double.NaN, double.NaN);   // RUSAGE_CHILDREN
        return (Seconds(usage), usage.Rest[4]);   // ru_minflt
    }

    private static double Seconds(RUsage usage) =>
        usage.UserSeconds + usage.SystemSeconds + (usage.UserMicroseconds + usage.SystemMicroseconds) * 1e-6;

    [StructLayout(LayoutKind.Sequential)]
    private struct RUsage
    {
        public long UserSeconds, UserMicroseconds, SystemSeconds, SystemMicroseconds;
        [MarshalAs(UnmanagedType.ByValArray, SizeConst = 14)] public long[] Rest;
    }

    [DllImport("libc", SetLastError = true)]
    private static extern int getrusage(int who, ref RUsage usage);
}

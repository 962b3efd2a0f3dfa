using System.Diagnostics;

namespace Decohere.Tests.Cli;

/// <summary>Runs the built <c>decohere</c> command-line program as a separate process, as a user would.</summary>
internal static class CliProcess
{
    public sealed record Result(int ExitCode, string Stdout, string Stderr);

    public static Result Run(string workingDirectory, params string[] args)
    {
        string dll = Path.Combine(AppContext.BaseDirectory, "decohere.dll");
        var info = new ProcessStartInfo("dotnet") { WorkingDirectory = workingDirectory, RedirectStandardOutput = true, RedirectStandardError = true };
        info.ArgumentList.Add(dll);
        foreach (var a in args) info.ArgumentList.Add(a);
        info.Environment["COLUMNS"] = "200";
        using var process = Process.Start(info)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(120_000)) { process.Kill(true); throw new TimeoutException("decohere did not finish in 120 s"); }
        return new Result(process.ExitCode, stdout.Result, stderr.Result);
    }
}

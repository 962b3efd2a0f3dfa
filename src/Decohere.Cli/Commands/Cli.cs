using Spectre.Console;
using System.CommandLine;
using Decohere.Core;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Cli.Commands;

/// <summary>Exit codes, shared options and error reporting of every command.</summary>
public static class Cli
{
    /// <summary>Success.</summary>
    public const int Ok = 0;
    /// <summary>Any failure that is not the user's input.</summary>
    public const int Failure = 1;
    /// <summary>Bad input: scenario, data file or command line.</summary>
    public const int BadInput = 2;
    /// <summary>Stopped by Ctrl-C or SIGTERM (128 + SIGINT, the shell convention).</summary>
    public const int Interrupted = 130;

    /// <summary>Parses and runs; command-line errors exit with <see cref="BadInput"/>.</summary>
    public static async Task<int> InvokeAsync(RootCommand root, string[] args, AppConsole console)
    {
        var parse = root.Parse(args);
        if (parse.Errors.Count > 0)
        {
            foreach (var error in parse.Errors) console.Error.MarkupLineInterpolated($"[red]error:[/] {error.Message}");
            console.Error.MarkupLine("Run with --help for usage.");
            return BadInput;
        }
        // Our own stop signal instead of the parser's: its handler exits the process after a timeout, which would cut
        // short the cleanup that deletes partial files. Here the commands see the cancellation and unwind normally.
        using var stop = new CancellationTokenSource();
        ConsoleCancelEventHandler onCancel = (_, e) => { e.Cancel = true; stop.Cancel(); };
        Console.CancelKeyPress += onCancel;
        using var onTerminate = System.Runtime.InteropServices.PosixSignalRegistration.Create(
            System.Runtime.InteropServices.PosixSignal.SIGTERM, context => { context.Cancel = true; stop.Cancel(); });
        AppDomain.CurrentDomain.UnhandledException += OnUnhandled;
        try
        {
            // The parser's own handler prints the whole stack trace; ours prints one line.
            int code = await parse.InvokeAsync(new InvocationConfiguration { ProcessTerminationTimeout = null, EnableDefaultExceptionHandler = false }, stop.Token);
            return stop.IsCancellationRequested ? Interrupted : code;
        }
        catch (Exception e) when (e is not OutOfMemoryException)
        {
            // Plain, not through the styled console: one line however narrow the terminal.
            console.ErrorText.WriteLine(LastResort(e));
            return stop.IsCancellationRequested ? Interrupted : Failure;
        }
        finally
        {
            Console.CancelKeyPress -= onCancel;
            AppDomain.CurrentDomain.UnhandledException -= OnUnhandled;
        }
    }

    /// <summary>The one line printed for a failure no command anticipated (never a stack trace).</summary>
    public static string LastResort(Exception e)
    {
        string message = e.Message.Split('\n')[0].Trim();
        if (message.Length > 300) message = message[..300] + "...";
        return $"error: internal failure ({e.GetType().Name}: {message}); please report it with the command line and the input files";
    }

    // A worker thread's exception ends the process whatever we do; at least it ends with one line and exit code 1.
    private static void OnUnhandled(object? sender, UnhandledExceptionEventArgs args)
    {
        Console.Error.WriteLine(args.ExceptionObject is Exception e ? LastResort(e) : "error: internal failure");
        Environment.Exit(Failure);
    }

    /// <summary>The optional scenario argument; without it the built-in demo runs.</summary>
    public static Argument<FileInfo?> ScenarioArgument(bool optional) => new("scenario")
    {
        Description = optional ? "Scenario file (YAML). Without it, the built-in demo scenario." : "Scenario file (YAML).",
        Arity = optional ? ArgumentArity.ZeroOrOne : ArgumentArity.ExactlyOne,
    };

    /// <summary>--out DIR.</summary>
    public static Option<DirectoryInfo?> OutOption() => new("--out")
    {
        Description = "Output directory (default: results/<scenario name>/).",
    };

    /// <summary>--quiet.</summary>
    public static Option<bool> QuietOption() => new("--quiet", "-q") { Description = "Print only errors and the paths written." };

    /// <summary>--max-memory, --max-disk and --force: the resource bounds of a command that can be large.</summary>
    public sealed class LimitOptions
    {
        /// <summary>--max-memory SIZE.</summary>
        public Option<string?> MaxMemory { get; } = new("--max-memory")
        {
            Description = $"Refuse to start when the estimated peak memory exceeds SIZE (default {ResourceLimits.Format(ResourceLimits.Default.MemoryBytes!.Value)}), e.g. 8GiB.",
        };

        /// <summary>--max-disk SIZE.</summary>
        public Option<string?> MaxDisk { get; } = new("--max-disk")
        {
            Description = $"Refuse to start when the estimated output exceeds SIZE (default {ResourceLimits.Format(ResourceLimits.Default.DiskBytes!.Value)}), e.g. 100GB.",
        };

        /// <summary>--force.</summary>
        public Option<bool> Force { get; } = new("--force") { Description = "Start even when the estimated memory or output exceeds its limit." };

        /// <summary>The three options, to add to a command.</summary>
        public IEnumerable<Option> All => [MaxMemory, MaxDisk, Force];

        /// <summary>The limits the options set.</summary>
        /// <exception cref="InputException">A size is malformed; the message names the option.</exception>
        public ResourceLimits Read(ParseResult parse)
        {
            if (parse.GetValue(Force)) return ResourceLimits.None;
            var d = ResourceLimits.Default;
            return new ResourceLimits(
                parse.GetValue(MaxMemory) is { } m ? ResourceLimits.ParseSize(m, "--max-memory") : d.MemoryBytes,
                parse.GetValue(MaxDisk) is { } k ? ResourceLimits.ParseSize(k, "--max-disk") : d.DiskBytes);
        }
    }

    /// <summary>A resource-limit message of the library (see <see cref="ResourceEstimate.Enforce"/>) with the options that change the limits.</summary>
    public static string InOptions(string message) => AsOption(message, LimitFlags)
        .Replace("Raise the memory limit", "Raise it with --max-memory SIZE", StringComparison.Ordinal)
        .Replace("Raise the disk limit", "Raise it with --max-disk SIZE", StringComparison.Ordinal)
        .Replace("or skip the bound", "or skip the bound with --force", StringComparison.Ordinal);

    private static readonly IReadOnlyDictionary<string, string> LimitFlags = new Dictionary<string, string>
    {
        ["memory limit"] = "--max-memory", ["disk limit"] = "--max-disk",
    };

    /// <summary>A quantity with units for a setting (<c>"2 ms"</c>); the error names the setting, which the command maps to its option.</summary>
    /// <exception cref="InputException">Not a number of the dimension.</exception>
    public static double Quantity(string text, Dimension dimension, string setting) =>
        Core.Quantity.TryParse(text, dimension, out double v, out string? error) ? v : throw new InputException($"{setting}: {error}");

    /// <summary>Loads the scenario file, or the demo when none is given.</summary>
    public static Scenario Load(FileInfo? file) => file is null ? ScenarioLoader.Demo() : ScenarioLoader.Load(file.FullName);

    /// <summary>The output directory for a scenario.</summary>
    public static string OutputDirectory(DirectoryInfo? option, Scenario scenario) =>
        option?.FullName ?? Path.Combine("results", scenario.Name);

    /// <summary>
    /// Writes a result through its report into a directory the command owns: the command's stale outputs there are
    /// removed first and the files written are recorded in the directory's manifest.
    /// </summary>
    public static async Task<IReadOnlyList<string>> WriteOwned<T>(IReport<T> report, T result, string directory, OutputSet files, CancellationToken cancel,
        bool csv = false)
    {
        var owned = IO.OutputDirectory.Claim(directory, files);
        var paths = WithCsv(await report.WriteAsync(result, directory, cancel), csv, cancel);
        owned.Record(paths);
        return paths;
    }

    /// <summary>--format parquet,csv: Parquet is always written; csv adds a CSV copy beside each table.</summary>
    public static Option<string> FormatOption()
    {
        var option = new Option<string>("--format")
        {
            Description = $"Table formats, a list of {CsvExport.Formats} (Parquet is always written; csv adds NAME.csv beside each NAME.parquet).",
            DefaultValueFactory = _ => "parquet",
        };
        option.Validators.Add(result =>
        {
            try
            {
                CsvExport.WantsCsv(result.GetValueOrDefault<string>());
            }
            catch (InputException e)
            {
                result.AddError("--format" + e.Message["format".Length..]);
            }
        });
        return option;
    }

    /// <summary>The paths written plus, when <paramref name="csv"/>, a CSV copy of each Parquet table among them.</summary>
    public static IReadOnlyList<string> WithCsv(IReadOnlyList<string> paths, bool csv, CancellationToken cancel) =>
        csv ? [.. paths, .. CsvExport.Beside(paths, cancel)] : paths;

    /// <summary>
    /// Runs a command body, turning the library's exceptions into messages and exit codes. The library names its
    /// settings in its own words ("threshold: …"); <paramref name="flags"/> maps those words to this command's options,
    /// so a message that starts with a setting is shown with the option the user typed.
    /// </summary>
    public static async Task<int> Guard(AppConsole console, IReadOnlyDictionary<string, string>? flags, Func<Task<int>> body)
    {
        try
        {
            return await body();
        }
        catch (ScenarioException e)
        {
            console.Error.MarkupLineInterpolated($"[red]error:[/] {e.SourceName}: {e.Problems.Count} problem{(e.Problems.Count == 1 ? "" : "s")}");
            // Plain writes: one problem per line, never wrapped, so editors and scripts can jump to path:line.
            foreach (var p in e.Problems) console.ErrorText.WriteLine("  " + p);
            return BadInput;
        }
        catch (InputException e)
        {
            console.Error.MarkupLineInterpolated($"[red]error:[/] {InOptions(AsOption(e.Message, flags))}");
            return BadInput;
        }
        catch (UnstableDynamicsException e)
        {
            console.Error.MarkupLineInterpolated($"[red]error:[/] {e.Message}");
            return BadInput;
        }
        catch (OperationCanceledException)
        {
            console.Error.MarkupLine("[yellow]stopped:[/] finished files are kept; no partial file is left.");
            return Failure;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            console.Error.MarkupLineInterpolated($"[red]error:[/] {e.Message}");
            return Failure;
        }
    }

    /// <summary>A library message that starts with a setting's name, restated with the command's option for it.</summary>
    public static string AsOption(string message, IReadOnlyDictionary<string, string>? flags)
    {
        if (flags is null) return message;
        // Longest name first, so "reference stage" wins over a shorter name that prefixes it.
        foreach (var (setting, flag) in flags.OrderByDescending(kv => kv.Key.Length))
            if (message.StartsWith(setting, StringComparison.Ordinal) && message.Length > setting.Length && message[setting.Length] is ':' or ' ')
                return flag + message[setting.Length..];
        return message;
    }
}

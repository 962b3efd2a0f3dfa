using Spectre.Console;

namespace Decohere.Cli.Commands;

/// <summary>
/// Where a command writes: tables and messages (stdout), errors and progress (stderr), and the plain error writer for
/// one-problem-per-line lists. Passed to every command, so tests can run commands side by side, each with its own.
/// </summary>
/// <param name="Out">Tables, messages and the paths written.</param>
/// <param name="Error">Errors, warnings about stopping, progress bars.</param>
/// <param name="ErrorText">Unformatted error lines, never wrapped, so editors and scripts can jump to path:line.</param>
/// <param name="Interactive">True when stderr is a terminal: progress bars are drawn only then.</param>
public sealed record AppConsole(IAnsiConsole Out, IAnsiConsole Error, TextWriter ErrorText, bool Interactive)
{
    /// <summary>The process's stdout and stderr.</summary>
    public static AppConsole System() => new(
        Wide(AnsiConsole.Console, Console.IsOutputRedirected),
        Wide(AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) }), Console.IsErrorRedirected),
        Console.Error,
        !Console.IsErrorRedirected);

    /// <summary>Plain-text consoles over two writers (no colour, no progress), for tests and embedding.</summary>
    public static AppConsole Capture(TextWriter output, TextWriter error) => new(
        AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(output), Ansi = AnsiSupport.No }),
        AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(error), Ansi = AnsiSupport.No }),
        error,
        false);

    // Piped output goes to files and logs, not an 80-column window: don't wrap tables there.
    private static IAnsiConsole Wide(IAnsiConsole console, bool redirected)
    {
        if (redirected) console.Profile.Width = 240;
        return console;
    }

    /// <summary>Prints warnings in yellow.</summary>
    public void Warnings(IEnumerable<string> warnings)
    {
        foreach (var w in warnings) Out.MarkupLineInterpolated($"[yellow]warning:[/] {w}");
    }

    /// <summary>Prints notes in yellow.</summary>
    public void Notes(IEnumerable<string> notes)
    {
        foreach (var n in notes) Out.MarkupLineInterpolated($"[yellow]note:[/] {n}");
    }

    /// <summary>Prints the paths written, one per line (the last lines of every command's output).</summary>
    public void Paths(IEnumerable<string> paths)
    {
        foreach (var path in paths) Out.WriteLine(path);
    }
}

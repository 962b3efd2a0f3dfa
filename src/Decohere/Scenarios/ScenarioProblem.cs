namespace Decohere.Scenarios;

/// <summary>One problem found in a scenario file: where (path, line, column) and what.</summary>
public sealed record ScenarioProblem(string Path, int Line, int Column, string Message)
{
    /// <inheritdoc />
    public override string ToString() =>
        Line > 0 ? $"{Path} (line {Line}, column {Column}): {Message}" : $"{Path}: {Message}";
}

/// <summary>Raised when a scenario file does not validate; carries every problem found, not just the first.</summary>
public sealed class ScenarioException(string source, IReadOnlyList<ScenarioProblem> problems)
    : Exception(FormatMessage(source, problems))
{
    /// <summary>Every problem found, in file order.</summary>
    public IReadOnlyList<ScenarioProblem> Problems { get; } = problems;

    /// <summary>File name or other label of the scenario source.</summary>
    public string SourceName { get; } = source;

    private static string FormatMessage(string source, IReadOnlyList<ScenarioProblem> problems) =>
        $"{source}: {problems.Count} problem{(problems.Count == 1 ? "" : "s")}:" + Environment.NewLine +
        string.Join(Environment.NewLine, problems.Select(p => "  " + p));
}

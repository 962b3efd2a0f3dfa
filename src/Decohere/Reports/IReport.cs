namespace Decohere.Reports;

/// <summary>
/// Writes one kind of result — its tables, JSON and plots — into a directory. A report reads the result only; it never
/// runs an analysis or the engine. Every file is written atomically, so a stopped report leaves no partial file.
/// </summary>
/// <typeparam name="TResult">The result it writes.</typeparam>
public interface IReport<in TResult>
{
    /// <summary>Writes the files of <paramref name="result"/> into <paramref name="directory"/> (created if needed); returns their full paths.</summary>
    Task<IReadOnlyList<string>> WriteAsync(TResult result, string directory, CancellationToken cancel = default);
}

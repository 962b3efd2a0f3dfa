
namespace Decohere.IO;

/// <summary>
/// Writes a file through a temporary sibling and a rename, so that a crash, an error or Ctrl-C never leaves a
/// half-written output under the final name.
/// </summary>
public sealed class AtomicFile : IDisposable
{
    private bool _committed;

    /// <summary>The final path.</summary>
    public string Path { get; }

    /// <summary>The temporary path being written.</summary>
    public string TemporaryPath { get; }

    /// <summary>Starts a write of <paramref name="path"/>; creates the directory if needed.</summary>
    public AtomicFile(string path)
    {
        Path = System.IO.Path.GetFullPath(path);
        Directory.CreateDirectory(System.IO.Path.GetDirectoryName(Path)!);
        TemporaryPath = $"{Path}.partial-{Environment.ProcessId}-{Guid.NewGuid():N}";
    }

    /// <summary>Moves the finished temporary file to its final name, replacing any older file.</summary>
    public void Commit()
    {
        File.Move(TemporaryPath, Path, overwrite: true);
        _committed = true;
    }

    /// <summary>Removes the temporary file unless it was committed.</summary>
    public void Dispose()
    {
        if (!_committed && File.Exists(TemporaryPath)) File.Delete(TemporaryPath);
    }

    /// <summary>Writes a whole text file atomically.</summary>
    public static void WriteAllText(string path, string text)
    {
        using var file = new AtomicFile(path);
        File.WriteAllText(file.TemporaryPath, text);
        file.Commit();
    }

    /// <summary>Writes a file atomically through a callback that receives the temporary path.</summary>
    public static void Write(string path, Action<string> writeTemporary)
    {
        using var file = new AtomicFile(path);
        writeTemporary(file.TemporaryPath);
        file.Commit();
    }
}

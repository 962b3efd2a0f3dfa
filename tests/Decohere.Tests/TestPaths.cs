namespace Decohere.Tests;

/// <summary>Locations the tests need: the repository root (for scenarios/) and fresh temporary directories.</summary>
internal static class TestPaths
{
    public static string RepositoryRoot { get; } = FindRoot();

    private static string FindRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Decohere.sln"))) dir = dir.Parent;
        return dir?.FullName ?? throw new InvalidOperationException("repository root (Decohere.sln) not found");
    }

    public static string NewTempDirectory()
    {
        string path = Path.Combine(Path.GetTempPath(), "decohere-tests", Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(path);
        return path;
    }
}

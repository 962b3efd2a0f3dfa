using Decohere.Scenarios;

namespace Decohere.Benchmarks;

internal static class Files
{
    public static string Root { get; } = FindRoot();

    private static string FindRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Decohere.sln"))) dir = dir.Parent;
        return dir?.FullName ?? Directory.GetCurrentDirectory();
    }

    public static Scenario Load(string name) => ScenarioLoader.Load(Path.Combine(Root, "scenarios", name));
}

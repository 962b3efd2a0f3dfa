using System.CommandLine;
using Decohere.Cli.Commands;

using Commands = Decohere.Cli.Commands;

namespace Decohere.Tests.Cli;

/// <summary><c>modes</c> and <c>reconstruct</c> end to end: the round trip through a measured-modes file, and bad input named with its option or file.</summary>
public sealed class LatticeCommandTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "decohere-lattice-" + Guid.NewGuid().ToString("N"));
    private readonly StringWriter _err = new();
    private readonly AppConsole _console;

    public LatticeCommandTests()
    {
        _console = AppConsole.Capture(TextWriter.Null, _err);
        Directory.CreateDirectory(_dir);
    }

    public void Dispose()
    {
        if (Directory.Exists(_dir)) Directory.Delete(_dir, true);
    }

    private Task<int> Invoke(params string[] args) =>
        Commands.Cli.InvokeAsync(new RootCommand("test") { ModesCommand.Create(_console), ReconstructCommand.Create(_console) }, args, _console);

    private static string Scenario(string name) => Path.Combine(TestPaths.RepositoryRoot, "scenarios", name);

    [Fact]
    public async Task ReconstructTakesTheSpectroscopyTableOfModes()
    {
        string modes = Path.Combine(_dir, "modes");
        Assert.Equal(0, await Invoke("modes", Scenario("ssh-chain.yaml"), "--spectroscopy", "--averages", "20", "--out", modes, "--quiet"));
        string table = Path.Combine(modes, "spectroscopy.parquet");
        Assert.True(File.Exists(table));
        string fitted = Path.Combine(_dir, "fitted");
        Assert.Equal(0, await Invoke("reconstruct", Scenario("ssh-chain.yaml"), "--data", table, "--out", fitted, "--quiet"));
        foreach (var f in new[] { "reconstruct.json", "reconstruct.parquet" }) Assert.True(File.Exists(Path.Combine(fitted, f)), f);
    }

    [Theory]
    [InlineData("mode_index,mode_frequency_hz\n0,4.1e9\n", "mode_frequency_err_hz")]   // a required column missing
    [InlineData("mode_index,mode_frequency_hz,mode_frequency_err_hz\n0,abc,1e4\n", "line 2")]   // not a number, named by line
    [InlineData("", "modes.csv")]                                                          // empty file
    public async Task BadMeasuredModesExitWithTheInputCodeAndNameTheProblem(string csv, string named)
    {
        string data = Path.Combine(_dir, "modes.csv");
        await File.WriteAllTextAsync(data, csv);
        string outDir = Path.Combine(_dir, "out");
        Assert.Equal(Commands.Cli.BadInput, await Invoke("reconstruct", Scenario("ssh-chain.yaml"), "--data", data, "--out", outDir, "--quiet"));
        Assert.Contains(named, _err.ToString());
        Assert.False(File.Exists(Path.Combine(outDir, "reconstruct.json")));
    }

    [Theory]
    [InlineData("reconstruct", "ssh-chain.yaml", "--confidence", "1.5", "--confidence")]
    [InlineData("modes", "ssh-chain.yaml", "--photons", "-1", "--photons")]
    [InlineData("modes", "demo.yaml", "--photons", "1e6", "lattice")]   // a scenario without a lattice
    public async Task BadSettingsAreNamed(string command, string scenario, string option, string value, string named)
    {
        string data = Path.Combine(_dir, "modes.csv");
        await File.WriteAllTextAsync(data, "mode_index,mode_frequency_hz,mode_frequency_err_hz\n0,4.1e9,1e4\n");
        string[] args = command == "reconstruct"
            ? [command, Scenario(scenario), "--data", data, option, value, "--out", _dir, "--quiet"]
            : [command, Scenario(scenario), "--spectroscopy", option, value, "--out", _dir, "--quiet"];
        Assert.Equal(Commands.Cli.BadInput, await Invoke(args));
        Assert.Contains(named, _err.ToString());
    }
}

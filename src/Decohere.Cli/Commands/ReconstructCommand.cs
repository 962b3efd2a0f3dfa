using System.CommandLine;

namespace Decohere.Cli.Commands;

/// <summary><c>decohere reconstruct SCENARIO --data FILE</c>: the coupling matrix fitted to measured modes.</summary>
public static class ReconstructCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(AppConsole console) => new("reconstruct", "Fit the coupling matrix of a lattice to measured collective modes.");
}

namespace Decohere.Tests.Cli;

/// <summary>Tests that run commands in-process swap the CLI's static consoles, so they must not run in parallel.</summary>
[CollectionDefinition(Name, DisableParallelization = true)]
public sealed class ConsoleCollection
{
    public const string Name = "in-process CLI (shared consoles)";
}

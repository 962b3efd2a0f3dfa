using Decohere.Core;

namespace Decohere.Scenarios;

/// <summary>
/// The provenance of a scenario. It lives with the scenario, not in <c>Core</c>, so that <c>Core</c> needs nothing above
/// it; as a static extension, callers still write <c>Provenance.For(scenario)</c>.
/// </summary>
public static class ScenarioProvenance
{
    extension(Provenance)
    {
        /// <summary>Metadata for a run of a scenario with the given seed (default: the scenario's).</summary>
        public static Provenance For(Scenario scenario, long? seed = null) =>
            new(scenario.Name, scenario.SourceHash, scenario.SourceText, seed ?? scenario.Seed, Provenance.Version);
    }
}

using System.Text.Json.Nodes;
using YamlDotNet.RepresentationModel;
using Decohere.Scenarios;

namespace Decohere.Tests.Scenarios;

/// <summary>
/// scenarios/scenario.schema.json, the format definition it is generated from (<see cref="ScenarioFormat"/>) and the
/// loader agree: the file is the definition's output, every example validates, the loader accepts exactly the defined
/// keys in every section, and structurally broken files are refused by the schema as by the loader.
/// Set DECOHERE_WRITE_SCHEMA=1 to rewrite the file from the definition.
/// </summary>
public class ScenarioSchemaTests
{
    private static string SchemaPath => Path.Combine(TestPaths.RepositoryRoot, "scenarios", "scenario.schema.json");

    private static JsonObject Schema => ScenarioFormat.Schema();

    [Fact]
    public void TheSchemaFileIsTheDefinitionsOutput()
    {
        if (Environment.GetEnvironmentVariable("DECOHERE_WRITE_SCHEMA") == "1") File.WriteAllText(SchemaPath, ScenarioFormat.SchemaText());
        Assert.True(File.Exists(SchemaPath), "scenarios/scenario.schema.json is missing; run the tests with DECOHERE_WRITE_SCHEMA=1");
        Assert.Equal(ScenarioFormat.SchemaText(), File.ReadAllText(SchemaPath).Replace("\r\n", "\n"));
        // Draft 2020-12 (json-schema.org/draft/2020-12/schema is the meta-schema's identifier).
        Assert.Equal("https://json-schema.org/draft/2020-12/schema", (string?)JsonNode.Parse(File.ReadAllText(SchemaPath))!["$schema"]);
    }

    public static TheoryData<string> Examples() => [.. Directory.GetFiles(Path.Combine(TestPaths.RepositoryRoot, "scenarios"), "*.yaml").Select(f => Path.GetFileName(f))];

    [Theory]
    [MemberData(nameof(Examples))]
    public void EveryExampleScenarioValidatesAndLoads(string file)
    {
        string text = File.ReadAllText(Path.Combine(TestPaths.RepositoryRoot, "scenarios", file));
        Assert.Empty(SchemaValidator.Validate(Schema, text));
        ScenarioLoader.Parse(text, file);
    }

    [Fact]
    public void TheBuiltInDemoValidates() => Assert.Empty(SchemaValidator.Validate(Schema, ScenarioLoader.DemoText));

    // Every section of the format appears here at least once, so each can be probed against the loader.
    private const string Everything = """
        name: all-sections
        model: full
        sideband_corrections: false
        modes:
          drum: { kind: mechanical, frequency: 4 MHz, linewidth: 1 Hz, bath: { temperature: 10 mK, excess: 5, relax_time: 1 ms } }
          lc: { kind: cavity, frequency: 5 GHz, quality_factor: 25000, bath: { occupancy: 0, heating: { coefficient: 1e-5, exponent: 1 } } }
        couplings:
          - { modes: [drum, lc], kind: beam-splitter, rate: 1 kHz }
        initial:
          drum: { state: thermal, occupancy: 1 }
        stages:
          - name: cool
            duration: 1 ms
            tones: [{ cavity: lc, mechanical: drum, sideband: red, coupling: 10 kHz }]
            bath: { lc: { occupancy: 0.1 } }
            detuning: { drum: 2 Hz }
        readout:
          mode: drum
          shots: 100
          stage: cool
          delays: [0 ms]
          chain: [{ efficiency: 0.5 }]
        jitter: { frequency: { drum: 1 Hz }, coupling: 0.01, occupancy: { drum: 1 } }
        output: { step: 10 us }
        seed: 3
        """;

    // Every lattice section once (a lattice replaces modes and couplings, so it needs a file of its own).
    private const string EveryLatticeSection = """
        name: all-lattice-sections
        model: full
        lattice:
          kind: chain
          sites: 4
          couplings: [80 MHz, 120 MHz]
          cavity: { frequency: 6 GHz, linewidth: 1 MHz, bath: { occupancy: 0.05 } }
          drum: { frequency: 5 MHz, spacing: 50 kHz, linewidth: 1 Hz, bath: { temperature: 15 mK }, g0: 20 Hz }
          disorder: { frequency: 1 MHz, seed: 2 }
          cells: { "1": { cavity: { linewidth: 2 MHz }, drum: { g0: 25 Hz } } }
        stages:
          - name: cool
            duration: 1 ms
            tones: [{ collective: 0, sideband: red, photons: 1e6 }]
        """;

    private const string ExplicitBonds = """
        name: explicit-bonds
        model: full
        lattice:
          kind: explicit
          positions: [[0, 0], [1, 0], [2, 0]]
          bonds: [{ sites: [0, 1], rate: 80 MHz }, { sites: [1, 2], rate: 120 MHz }, { sites: [0, 2], rate: 5 MHz, kind: next-nearest }]
          cavity: { frequency: 6 GHz, linewidth: 1 MHz, bath: { occupancy: 0.05 } }
          drum: { frequency: 5 MHz, linewidth: 1 Hz, bath: { temperature: 15 mK }, g0: 20 Hz }
        stages:
          - name: wait
            duration: 1 ms
        """;

    [Fact]
    public void TheLoaderAcceptsExactlyTheDefinedKeysOfEverySection()
    {
        var found = new List<(ScenarioFormat.Section Section, YamlMappingNode Node)>();
        var owners = new Dictionary<YamlMappingNode, YamlStream>(ReferenceEqualityComparer.Instance);
        foreach (string text in new[] { Everything, EveryLatticeSection, ExplicitBonds })
        {
            Assert.Empty(SchemaValidator.Validate(Schema, text));
            ScenarioLoader.Parse(text);
            var stream = new YamlStream();
            stream.Load(new StringReader(text));
            int before = found.Count;
            Walk(ScenarioFormat.Root, stream.Documents[0].RootNode, found);
            foreach (var entry in found.Skip(before)) owners[entry.Node] = stream;
        }
        Assert.Equal(ScenarioFormat.Sections().Keys.Order(), found.Select(f => f.Section.Name).Distinct().Order());
        foreach (var (section, node) in found)
        {
            var stream = owners[node];
            // An unknown key makes the loader name the keys it allows there (YamlReader.Mapping's message).
            var probe = new YamlScalarNode("zz_probe");
            node.Children.Add(probe, new YamlScalarNode("1"));
            var writer = new StringWriter();
            stream.Save(writer, assignAnchors: false);
            node.Children.Remove(probe);
            var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(writer.ToString()));
            var problem = Assert.Single(e.Problems, p => p.Message.Contains("unknown key 'zz_probe'"));
            string allowed = problem.Message[(problem.Message.LastIndexOf("allowed: ", StringComparison.Ordinal) + "allowed: ".Length)..];
            Assert.Equal(section.Keys.Select(k => k.Name).Order(), allowed.Split(", ").Order());
        }
    }

    private static void Walk(ScenarioFormat.Kind kind, YamlNode node, List<(ScenarioFormat.Section, YamlMappingNode)> found)
    {
        switch (kind, node)
        {
            case (ScenarioFormat.Section s, YamlMappingNode m):
                found.Add((s, m));
                foreach (var key in s.Keys)
                    if (m.Children.TryGetValue(new YamlScalarNode(key.Name), out var child)) Walk(key.Value, child, found);
                break;
            case (ScenarioFormat.MapKind map, YamlMappingNode m):
                foreach (var value in m.Children.Values) Walk(map.Value, value, found);
                break;
            case (ScenarioFormat.ListKind list, YamlSequenceNode seq):
                foreach (var item in seq.Children) Walk(list.Item, item, found);
                break;
            case (ScenarioFormat.EitherKind either, YamlMappingNode m):
                // The form the node is written in: the section whose required keys it has.
                foreach (var form in either.Forms.OfType<ScenarioFormat.Section>()
                    .Where(f => f.Keys.Where(k => k.Required).All(k => m.Children.ContainsKey(new YamlScalarNode(k.Name)))).Take(1))
                    Walk(form, node, found);
                break;
        }
    }

    // Structural cases of HostileInputTests (and two plain mistakes), each refused by the loader: the schema must refuse them too.
    [Theory]
    [InlineData("  drum:\n", "  ? [drum]\n  :\n")]                        // a list as a mode name
    [InlineData("  drum:\n", "  dr.um:\n")]                              // a parameter-path separator in a mode name
    [InlineData("  drum:\n", "  drum[0]:\n")]
    [InlineData("  drum:\n", "  \"dr\\u001b[2Jum\":\n")]                 // a control character
    [InlineData("name: cool", "name: \"co\\u0007ol\"")]                  // a control character in a stage name
    [InlineData("frequency: 4 MHz", "frequency: \"٤ MHz\"")]             // a non-ASCII digit
    [InlineData("frequency: 4 MHz", "frequency: 4 kK")]                  // an unknown unit
    [InlineData("linewidth: 1 Hz", "linewidht: 1 Hz")]                   // a misspelt key
    [InlineData("kind: mechanical", "kind: mechanic")]                   // not a choice
    [InlineData("stages:", "stagez:")]                                   // a required section missing
    public void StructuralErrorsAreRefusedByTheSchemaAsByTheLoader(string from, string to)
    {
        string yaml = ScenarioLoaderTests.Minimal.Replace(from, to);
        Assert.NotEqual(ScenarioLoaderTests.Minimal, yaml);
        Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml));
        Assert.NotEmpty(SchemaValidator.Validate(Schema, yaml));
    }

    [Theory]
    [InlineData("3000000000")]
    [InlineData("1e300")]
    [InlineData("2.5e0")]
    [InlineData("1")]
    public void ShotCountsOutsideTheLoadersRangeAreRefusedByTheSchema(string shots)
    {
        string yaml = ScenarioLoaderTests.Minimal + $"\nreadout: {{ mode: drum, added_noise: 1, shots: {shots}, stage: cool, delays: [0 ms] }}\n";
        Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml));
        Assert.NotEmpty(SchemaValidator.Validate(Schema, yaml));
    }

    [Fact]
    public void TooManyModesAreRefusedByTheSchema()
    {
        var yaml = new System.Text.StringBuilder("name: t\nmodes:\n");
        for (int i = 0; i <= ScenarioLoader.MaxModes; i++) yaml.Append($"  m{i}: {{ kind: mechanical, frequency: 4 MHz, linewidth: 1 Hz, bath: {{ occupancy: 1 }} }}\n");
        yaml.Append("stages: [ { name: s, duration: 1 ms } ]\n");
        Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(yaml.ToString()));
        Assert.Contains(SchemaValidator.Validate(Schema, yaml.ToString()), e => e.Contains("maxProperties"));
    }
}

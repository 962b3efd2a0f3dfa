using System.Globalization;
using System.Text;
using Decohere.Scenarios;

namespace Decohere.Benchmarks;

/// <summary>
/// The chain of scenarios/chain-40.yaml at any length: cells of a microwave cavity sideband-cooling its own drum with a red
/// tone, cavities coupled in a line by hopping. Written as scenario text and loaded, so it passes the same validation.
/// </summary>
internal static class ChainScenario
{
    /// <summary>The chain scenario of <paramref name="cells"/> cells: 2·cells modes, state dimension 4·cells.</summary>
    public static Scenario Build(int cells) => ScenarioLoader.Parse(Text(cells), $"chain-{cells}-cells");

    public static string Text(int cells)
    {
        var s = new StringBuilder();
        var inv = CultureInfo.InvariantCulture;
        s.AppendLine(inv, $"name: chain-{cells}-cells");
        s.AppendLine("model: full");
        s.AppendLine("modes:");
        for (int i = 0; i < cells; i++)
        {
            s.AppendLine(inv, $"  c{i}: {{ kind: cavity, frequency: {5.0 + 0.01 * i:F2} GHz, linewidth: 200 kHz, bath: {{ occupancy: 0.05 }} }}");
            s.AppendLine(inv, $"  m{i}: {{ kind: mechanical, frequency: {4.0 + 0.1 * (i % 20):F1} MHz, linewidth: 2 Hz, bath: {{ occupancy: {1 + i % 5} }} }}");
        }

        s.AppendLine("couplings:");
        for (int i = 0; i + 1 < cells; i++)
        {
            s.AppendLine(inv, $"  - {{ modes: [c{i}, c{i + 1}], kind: beam-splitter, rate: 80 kHz }}");
        }

        s.AppendLine("stages:");
        s.AppendLine("  - name: cool");
        s.AppendLine("    duration: 10 ms");
        s.AppendLine("    tones:");
        for (int i = 0; i < cells; i++)
        {
            s.AppendLine(inv, $"      - {{ cavity: c{i}, mechanical: m{i}, sideband: red, coupling: {10 + i % 20} kHz }}");
        }

        s.AppendLine("output:");
        s.AppendLine("  step: 1 us");
        s.AppendLine("seed: 40");
        return s.ToString();
    }
}

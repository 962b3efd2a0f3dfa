using System.Globalization;
using Decohere.Scenarios;

namespace Decohere.Tests.Engine;

/// <summary>Small scenarios for physics tests, written as YAML so they also exercise the loader.</summary>
internal static class TestScenarios
{
    public static string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>One mechanical mode, no drives: pure thermal decoherence.</summary>
    public static Scenario FreeMode(double linewidthHz, double occupancy, string initial, double durationS = 10) => ScenarioLoader.Parse($"""
        name: free
        modes:
          m: {"{"} kind: mechanical, frequency: 4 MHz, linewidth: {F(linewidthHz)}, bath: {"{"} occupancy: {F(occupancy)} {"}"} {"}"}
        initial:
          m: {initial}
        stages:
          - {"{"} name: release, duration: {F(durationS)} {"}"}
        """);

    /// <summary>A cavity and a mechanical mode with the given tones in one stage (couplings in Hz).</summary>
    public static Scenario Optomechanical(string model, double kappaHz, double gammaHz, double nth, double nc,
        double redHz, double blueHz, double durationS = 1e-3, double omegaHz = 4e6, bool corrections = false, string initial = "")
    {
        var list = new List<string>();
        if (redHz > 0) list.Add($"{{ cavity: c, mechanical: m, sideband: red, coupling: {F(redHz)} }}");
        if (blueHz > 0) list.Add($"{{ cavity: c, mechanical: m, sideband: blue, coupling: {F(blueHz)} }}");
        string tones = string.Join(", ", list);
        return ScenarioLoader.Parse($"""
            name: om
            model: {model}
            sideband_corrections: {(corrections ? "true" : "false")}
            modes:
              m: {"{"} kind: mechanical, frequency: {F(omegaHz)}, linewidth: {F(gammaHz)}, bath: {"{"} occupancy: {F(nth)} {"}"} {"}"}
              c: {"{"} kind: cavity, frequency: 5 GHz, linewidth: {F(kappaHz)}, bath: {"{"} occupancy: {F(nc)} {"}"} {"}"}
            {initial}
            stages:
              - name: drive
                duration: {F(durationS)}
                tones: [{tones}]
            """);
    }
}

using System.Collections.Immutable;
using BenchmarkDotNet.Attributes;
using Decohere.Analyses.Lattices;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Benchmarks;

/// <summary>
/// Lattice analyses on scenarios/honeycomb-flake.yaml (24 cells, 48 modes). Target: modes, simulated spectroscopy and
/// reconstruction together on the order of a second.
/// </summary>
public class LatticeFlake
{
    private Scenario _scenario = null!;
    private SpectroscopyData _data = null!;
    private LinearModel _cooling = null!;

    [GlobalSetup]
    public void Setup()
    {
        _scenario = Files.Load("honeycomb-flake.yaml");
        _data = Data(SpectroscopyAnalysis.Solve(_scenario, Settings));
        _cooling = ModelBuilder.Build(_scenario, _scenario.Stages[0]);
    }

    internal static readonly SpectroscopySettings Settings = new() { Photons = 1e5, Averages = 200, Seed = 1 };

    internal static SpectroscopyData Data(SpectroscopyResult r) => new(
        [.. r.Rows.GroupBy(x => x.ModeIndex).Select(g => new MeasuredMode(g.Key, g.First().MeasuredModeFrequencyHz, r.Settings.FrequencyErrorHz))],
        [.. r.Rows.Where(x => x.MeasuredDampingWeight is not null)
            .Select(x => new MeasuredParticipation(x.ModeIndex, x.Site, x.MeasuredDampingWeight!.Value, x.MeasuredDampingWeightErr!.Value, true))]);

    [Benchmark(Description = "flake-24: collective modes")]
    public int Modes() => ModesAnalysis.Solve(_scenario, new ModesSettings()).Modes.Length;

    [Benchmark(Description = "flake-24: spectroscopy (every drum under every mode, fitted spectra)")]
    public int Spectroscopy() => SpectroscopyAnalysis.Solve(_scenario, Settings).Rows.Length;

    [Benchmark(Description = "flake-24: reconstruction from the spectroscopy")]
    public double Reconstruct() => ReconstructionAnalysis.Solve(_scenario, _data, new ReconstructionSettings()).ChiSquare;

    [Benchmark(Description = "flake-24: modes + spectroscopy + reconstruction")]
    public double Pipeline()
    {
        var spectroscopy = SpectroscopyAnalysis.Solve(_scenario, Settings);
        return ReconstructionAnalysis.Solve(_scenario, Data(spectroscopy), new ReconstructionSettings()).ChiSquare;
    }

    [Benchmark(Description = "flake-24: steady state of the collective cooling stage")]
    public double SteadyState() => Lyapunov.Solve(_cooling.Drift, _cooling.Diffusion).Covariance[0, 0];
}

/// <summary>
/// A disordered 100-cell chain (200 modes, the most a scenario holds): modes, the steady state of collective cooling, and a
/// reconstruction from every mode frequency and participation with Gaussian noise. Its spectroscopy (100 drifts of 400
/// dimensions, 10⁴ fitted spectra) takes about 12 s: <c>--filter '*LatticeChain.Spectroscopy*' --job dry</c>.
/// </summary>
public class LatticeChain
{
    private Scenario _scenario = null!;
    private SpectroscopyData _data = null!;
    private LinearModel _cooling = null!;

    [GlobalSetup]
    public void Setup()
    {
        _scenario = ScenarioLoader.Parse(Text, "chain-100.yaml");
        _cooling = ModelBuilder.Build(_scenario, _scenario.Stages[0]);
        var modes = LatticeModes.Solve(_scenario, _scenario.Lattice!);
        var random = RandomStream.For(1, Core.SeedStream.Spectroscopy);
        _data = new SpectroscopyData(
            [.. modes.Select((m, k) => new MeasuredMode(k, m.FrequencyHz + 20e3 * random.NextNormal(), 20e3))],
            [.. modes.SelectMany((m, k) => Enumerable.Range(0, modes.Length).Select(j => new MeasuredParticipation(k, j, m.Weight(j) + 1e-3 * random.NextNormal(), 1e-3)))]);
    }

    private const string Text = """
        name: chain-100
        lattice:
          kind: chain
          sites: 100
          couplings: [80 MHz, 120 MHz]
          cavity: { frequency: 6 GHz, linewidth: 300 kHz, bath: { occupancy: 0.05 } }
          drum: { frequency: 5 MHz, spacing: 2 kHz, linewidth: 1 Hz, bath: { temperature: 15 mK }, g0: 10 Hz }
          disorder: { frequency: 1 MHz, seed: 3 }
        stages:
          - { name: cool, duration: 1 ms, tones: [{ collective: 0, sideband: red, photons: 1e7 }] }
        """;

    [Benchmark(Description = "chain-100: collective modes")]
    public int Modes() => ModesAnalysis.Solve(_scenario, new ModesSettings()).Modes.Length;

    [Benchmark(Description = "chain-100: reconstruction from 100 frequencies and 10⁴ participations")]
    public double Reconstruct() => ReconstructionAnalysis.Solve(_scenario, _data, new ReconstructionSettings()).ChiSquare;

    [Benchmark(Description = "chain-100: steady state of the collective cooling stage")]
    public double SteadyState() => Lyapunov.Solve(_cooling.Drift, _cooling.Diffusion).Covariance[0, 0];

    [Benchmark(Description = "chain-100: spectroscopy")]
    public int Spectroscopy() => SpectroscopyAnalysis.Solve(_scenario, LatticeFlake.Settings).Rows.Length;
}

using System.Globalization;
using System.Text.Json.Nodes;
using Decohere.Analyses.Fitting;
using Decohere.Tests.Analyses.Fitting;
using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Model.Readouts;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.Cli;

/// <summary>Every command sees the same readout: one amplification scenario through check, run, lifetime, tolerance and sweep.</summary>
public class ReadoutAgreementTests
{
    private static readonly string Example = Path.Combine(TestPaths.RepositoryRoot, "scenarios", "amplified-readout.yaml");

    private static double Json(string dir, string file, params string[] path)
    {
        JsonNode node = JsonNode.Parse(File.ReadAllText(Path.Combine(dir, file)))!;
        foreach (var key in path) node = node[key]!;
        return node.GetValue<double>();
    }

    [Fact]
    public void EveryCommandReportsTheSameAddedNoise()
    {
        double expected = ReadoutChains.For(ScenarioLoader.Load(Example)).AddedNoise;
        string work = TestPaths.NewTempDirectory();

        var check = CliProcess.Run(work, "check", Example);
        Assert.Equal(0, check.ExitCode);
        Assert.Contains(expected.ToString("G4", CultureInfo.InvariantCulture) + " quanta per quadrature", check.Stdout);

        string run = Path.Combine(work, "run"), lifetime = Path.Combine(work, "lifetime"), tolerance = Path.Combine(work, "tolerance"), sweep = Path.Combine(work, "sweep");
        Assert.Equal(0, CliProcess.Run(work, "run", Example, "--out", run, "--quiet").ExitCode);
        Assert.Equal(expected, Json(run, "summary.json", "readout", "added_noise"), 1e-12 * expected);

        Assert.Equal(0, CliProcess.Run(work, "lifetime", Example, "--out", lifetime, "--quiet").ExitCode);
        Assert.Equal(expected, Json(lifetime, "lifetime.json", "readout", "added_noise"), 1e-12 * expected);

        Assert.Equal(0, CliProcess.Run(work, "tolerance", Example, "--added-noise", "0:2:+0.5", "--shots", "500,2000", "--out", tolerance, "--quiet").ExitCode);
        Assert.Equal(expected, Json(tolerance, "tolerance.json", "readout", "added_noise"), 1e-12 * expected);

        // The squeezing tone does not touch the readout (the drum's bath would: it heats the drum during the pulse).
        var s = CliProcess.Run(work, "sweep", Example, "--vary", "stages.squeeze.tones[1].coupling=15kHz,18kHz", "--metrics", "added_noise,resolution_probability,observable_lifetime",
            "--out", sweep, "--quiet");
        Assert.True(s.ExitCode == 0, s.Stderr);
        string file = Path.Combine(sweep, "sweep.parquet").Replace("'", "''");
        var rows = DuckDb.Query($"SELECT added_noise FROM read_parquet('{file}')");
        Assert.Equal(2, rows.Count);
        foreach (var r in rows) Assert.Equal(expected, (double)r[0]!, 1e-12 * expected);
    }

    [Fact]
    public void ANoisyChainIsNeverResolved()
    {
        // A lossy line in front of a noisy amplifier buries the squeezing: the power at the reference is far below ½.
        var scenario = ScenarioLoader.Load(Example);
        scenario = scenario with
        {
            Readout = scenario.Readout! with { Chain = [new ChainElement.Loss(0.02), new ChainElement.Amplifier(40, 20)] },
        };
        var core = LifetimeAnalysis.Analyze(scenario, new LifetimeSettings { Sensitivities = false });
        Assert.Equal(LifetimeStatus.Crossed, core.PhysicalStatus);
        Assert.Equal(LifetimeStatus.NeverResolved, core.ObservableStatus);
        Assert.Null(core.ObservableLifetimeS);
        Assert.Equal(ReadoutChains.For(scenario).AddedNoise, core.Readout!.AddedNoise);
        Assert.True(core.Readout.AddedNoise > 1);
    }

    [Fact]
    public async Task BathOccupancyComesBackFromAmplifiedShots()
    {
        // Shots sampled through the amplification readout and its chain, fitted with the same readout model; the drum's bath
        // occupancy is free (truth from the file's 15 mK at 4.1 MHz), everything else held at the truth.
        var template = ScenarioLoader.Load(Example);
        double truth = template.ModeNamed("drum").Bath.Occupancy;
        const int runs = 6;
        int covered = 0;
        for (int seed = 1; seed <= runs; seed++)
        {
            var scenario = template with { Readout = template.Readout! with { Shots = 4000, DelaysS = [0, 2e-3, 4e-3, 6e-3, 8e-3] }, Seed = seed };
            var data = await SyntheticData.SampledShotsAsync(scenario);
            var fit = FitAnalysis.Solve(scenario, new FitSettings { Starts = 1, Free = ["modes.drum.bath.occupancy"] }, data);
            var n = fit.Parameters.Single();
            // The drum's bath enters the pulse (γ(n_th + ½) during the amplification), so the fitted readout follows the fit.
            Assert.Equal(ReadoutChains.For(fit.Fitted).AddedNoise, fit.Readout.AddedNoise);
            Assert.InRange(n.High - n.Low, 0.5, 0.5 * truth);   // honest, not vacuous
            if (n.Low <= truth && truth <= n.High) covered++;
        }
        // 95% intervals: P(fewer than 4 of 6 cover) ≈ 0.002 under the binomial law (common practice).
        Assert.True(covered >= 4, $"{covered} of {runs} intervals contain n_th = {truth}");
    }
}

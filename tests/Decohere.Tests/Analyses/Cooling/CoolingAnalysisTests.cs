using MathNet.Numerics.Distributions;
using MathNet.Numerics;
using Decohere.Analyses.Cooling;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Tests.Engine;

namespace Decohere.Tests.Analyses.Cooling;

public class CoolingAnalysisTests
{
    private static Scenario Heated(string model, double kappaHz, double gammaHz, double nth, double nc0, double a, double b, bool corrections = false, double omegaHz = 4e6) =>
        ScenarioLoader.Parse($$"""
            name: heated
            model: {{model}}
            sideband_corrections: {{(corrections ? "true" : "false")}}
            modes:
              m: { kind: mechanical, frequency: {{TestScenarios.F(omegaHz)}}, linewidth: {{TestScenarios.F(gammaHz)}}, bath: { occupancy: {{TestScenarios.F(nth)}} } }
              c: { kind: cavity, frequency: 5 GHz, linewidth: {{TestScenarios.F(kappaHz)}}, bath: { occupancy: {{TestScenarios.F(nc0)}}, heating: { coefficient: {{TestScenarios.F(a)}}, exponent: {{TestScenarios.F(b)}} } } }
            stages:
              - { name: cool, duration: 1 ms, tones: [{ cavity: c, mechanical: m, sideband: red, cooperativity: 10 }] }
            """);

    /// <summary>
    /// The full rotating-wave model's exact steady occupancy n = [γn_th(4G² + κ(κ + γ)) + 4G²κ n_c]/[(γ + κ)(4G² + κγ)]
    /// (PHYSICS.md, derived for this project; sideband cooling as in F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007)),
    /// with n_c = n_c0 + a·C^b: every row to 1e-9, and the minimum against MathNet's golden-section search on the closed form.
    /// </summary>
    [Fact]
    public void FloorOfTheFullModelMatchesItsClosedForm()
    {
        double kappa = 2 * Math.PI * 200e3, gamma = 2 * Math.PI * 30, nth = 50, nc0 = 0.02, a = 2e-5, b = 1.3;
        var scenario = Heated("full", 200e3, 30, nth, nc0, a, b);
        double Closed(double c)
        {
            double g2 = c * kappa * gamma / 4, nc = nc0 + a * Math.Pow(c, b);
            return (gamma * nth * (4 * g2 + kappa * (kappa + gamma)) + 4 * g2 * kappa * nc) / ((gamma + kappa) * (4 * g2 + kappa * gamma));
        }
        var result = CoolingAnalysis.Solve(scenario, new CoolingSettings { Cooperativities = Ranges.LogSpaced(1, 1e5, 41) });
        foreach (var row in result.Rows)
        {
            Assert.Equal(Closed(row.Cooperativity), row.Occupancy, Closed(row.Cooperativity) * 1e-9);
            Assert.Equal(row.Occupancy, row.Thermal + row.CavityBase + row.HeatingShare + row.PhaseNoiseShare + row.Quantum, row.Occupancy * 1e-9);
        }
        double best = FindMinimum.OfScalarFunctionConstrained(u => Closed(Math.Exp(u)), 0, Math.Log(1e5), 1e-12);
        Assert.Equal(Closed(Math.Exp(best)), result.Minimum.Occupancy, Closed(Math.Exp(best)) * 1e-8);
        // The minimum is flat: its position is known to the square root of the tolerance on the value.
        Assert.Equal(Math.Exp(best), result.Minimum.Cooperativity, Math.Exp(best) * 1e-3);
        Assert.False(result.MinimumAtEdge);
    }

    /// <summary>
    /// The effective model with off-resonant rates: n_f = [γn_th + A₋n_c + A₊(n_c + 1)]/(γ + A₋ − A₊),
    /// A∓ = G²κ/((κ/2)² + (Δ ± ω_m)²) at Δ = −ω_m, whose floor is A₊/(A₋ − A₊) ≈ (κ/4ω_m)² (F. Marquardt et al., Phys. Rev.
    /// Lett. 99, 093902 (2007); I. Wilson-Rae et al., Phys. Rev. Lett. 99, 093901 (2007)). At large C with a cold bath the
    /// quantum share limits it.
    /// </summary>
    [Fact]
    public void EffectiveModelReachesTheSidebandResolutionLimit()
    {
        double kappaHz = 600e3, omegaHz = 1.5e6, gammaHz = 0.03;
        double kappa = 2 * Math.PI * kappaHz, omega = 2 * Math.PI * omegaHz, gamma = 2 * Math.PI * gammaHz;
        var scenario = Heated("effective", kappaHz, gammaHz, 0.5, 0.001, 1e-12, 1, corrections: true, omegaHz: omegaHz);
        var result = CoolingAnalysis.Solve(scenario, new CoolingSettings { Cooperativities = [10, 1e3, 1e7] });
        foreach (var row in result.Rows)
        {
            double g2 = row.Cooperativity * kappa * gamma / 4, nc = 0.001 + 1e-12 * row.Cooperativity;
            double minus = g2 * kappa / (kappa * kappa / 4), plus = g2 * kappa / (kappa * kappa / 4 + 4 * omega * omega);
            double expected = (gamma * 0.5 + minus * nc + plus * (nc + 1)) / (gamma + minus - plus);
            Assert.Equal(expected, row.Occupancy, expected * 1e-9);
        }
        var strong = result.Rows[^1];
        double limit = Math.Pow(kappa / (4 * omega), 2);
        Assert.Equal("quantum", strong.Limit);
        // A₊/(A₋ − A₊) = (κ/4ω_m)²/(1 − (κ/4ω_m)²·(1 + …)) to leading order: allow its next order, 2(κ/4ω_m)² relative.
        Assert.Equal(limit, strong.Quantum, limit * 2 * limit + 1e-12);
    }

    /// <summary>
    /// Phase noise is extra cavity occupancy n_φ = n·ω_m²·L/κ (derived in <see cref="CoolingAnalysis.PhaseNoiseOccupancy"/>): the
    /// curve with it equals the closed form with n_c → n_c + n_φ, and a filter of F dB divides n_φ by 10^(F/10).
    /// </summary>
    [Fact]
    public void PhaseNoiseEntersAsCavityOccupancy()
    {
        var scenario = Heated("full", 200e3, 30, 50, 0.0, 1e-12, 1);
        var settings = new CoolingSettings { Cooperativities = [100, 1000], PhaseNoiseDbcPerHz = -150, SinglePhotonCouplingHz = 50 };
        var noisy = CoolingAnalysis.Solve(scenario, settings);
        var filtered = CoolingAnalysis.Solve(scenario, settings with { FilterDb = 20 });
        double kappa = 2 * Math.PI * 200e3, gamma = 2 * Math.PI * 30, omega = 2 * Math.PI * 4e6, g0 = 2 * Math.PI * 50;
        for (int i = 0; i < 2; i++)
        {
            double c = noisy.Rows[i].Cooperativity, g2 = c * kappa * gamma / 4;
            double nphi = g2 / (g0 * g0) * omega * omega * 1e-15 / kappa;
            Assert.Equal(nphi, noisy.Rows[i].PhaseNoise, nphi * 1e-12);
            Assert.Equal(nphi / 100, filtered.Rows[i].PhaseNoise, nphi * 1e-14);
            double nc = nphi + 1e-12 * c;
            double expected = (gamma * 50 * (4 * g2 + kappa * (kappa + gamma)) + 4 * g2 * kappa * nc) / ((gamma + kappa) * (4 * g2 + kappa * gamma));
            Assert.Equal(expected, noisy.Rows[i].Occupancy, expected * 1e-9);
        }
    }

    /// <summary>
    /// The heating law fitted to occupancies simulated from a known law with Gaussian errors of stated σ (5%): over 20 seeds
    /// the 95% profile intervals of a and b must each contain the truth at least 16 times (expected 19, binomial σ ≈ 1).
    /// </summary>
    [Fact]
    public void HeatingLawIsRecoveredFromSimulatedPoints()
    {
        double a = 3e-5, b = 1.2;
        var truth = Heated("full", 200e3, 30, 50, 0.02, a, b);
        double[] cs = [10, 50, 200, 800, 2000, 5000, 1e4, 3e4];
        var exact = CoolingAnalysis.Solve(truth, new CoolingSettings { Cooperativities = [.. cs] }).Rows.Select(r => r.Occupancy).ToArray();
        var template = Heated("full", 200e3, 30, 50, 0.02, 1e-4, 1);
        int coverA = 0, coverB = 0;
        for (int seed = 0; seed < 20; seed++)
        {
            var normal = new Normal(0, 1, new Random(1000 + seed));
            var data = cs.Select((c, i) => new CoolingPoint(c, exact[i] * (1 + 0.05 * normal.Sample()), 0.05 * exact[i])).ToArray();
            var fit = CoolingAnalysis.Solve(template, new CoolingSettings { Cooperativities = [100] }, data).Fit!;
            if (fit.CoefficientLow <= a && a <= fit.CoefficientHigh) coverA++;
            if (fit.ExponentLow <= b && b <= fit.ExponentHigh) coverB++;
        }
        Assert.InRange(coverA, 16, 20);
        Assert.InRange(coverB, 16, 20);
    }

    [Fact]
    public void AStageWithoutARedToneIsRefusedByName()
    {
        var scenario = TestScenarios.Optomechanical("full", 200e3, 30, 5, 0, 0, 1e3);
        var e = Assert.Throws<InputException>(() => CoolingAnalysis.Solve(scenario, new CoolingSettings()));
        Assert.StartsWith("stage:", e.Message);
    }

    /// <summary>
    /// Every command sees the heating law: the engine's steady state of a stage whose tone is given as C = 10 equals the
    /// closed form above with n_c = n_c0 + a·10^b.
    /// </summary>
    [Fact]
    public void TheEngineAppliesTheHeatingLaw()
    {
        double kappa = 2 * Math.PI * 200e3, gamma = 2 * Math.PI * 30, nth = 50, nc = 0.02 + 0.3 * Math.Pow(10, 1.5);
        var dynamics = Decohere.Engine.Dynamics.Solve(Heated("full", 200e3, 30, nth, 0.02, 0.3, 1.5));
        var m = dynamics.SteadyState(0).Moments("m");
        double g2 = 10 * kappa * gamma / 4;
        double expected = (gamma * nth * (4 * g2 + kappa * (kappa + gamma)) + 4 * g2 * kappa * nc) / ((gamma + kappa) * (4 * g2 + kappa * gamma));
        Assert.Equal(expected, m.Occupancy, expected * 1e-9);
    }

    [Fact]
    public void AHeatingLawGivenTwiceIsRefusedWithItsPath()
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse("""
            name: bad
            modes:
              m: { kind: mechanical, frequency: 4 MHz, linewidth: 10 Hz, bath: { occupancy: 1 } }
              c: { kind: cavity, frequency: 5 GHz, linewidth: 1 MHz, bath: { occupancy: 0, heating: { coefficient: 1e-5, table: [[0, 0], [10, 1]] } } }
            stages:
              - { name: s, duration: 1 ms }
            """));
        Assert.Contains(e.Problems, p => p.Path == "modes.c.bath.heating");
    }
}

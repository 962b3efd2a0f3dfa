using MathNet.Numerics.LinearAlgebra;
using Decohere.Engine;
using Decohere.Model;
using Decohere.Scenarios;

namespace Decohere.Tests.Engine;

/// <summary>Baths that relax in time, n(t) = n₀ + excess·e^{−(t − t_s)/τ}, through the one propagator.</summary>
public class TransientBathTests
{
    private const string Yaml = """
        name: transient
        modes:
          m: { kind: mechanical, frequency: 4 MHz, linewidth: 300 Hz, bath: { occupancy: 40, excess: 150, relax_time: 0.3 ms, from_stage: readout } }
          c: { kind: cavity, frequency: 5 GHz, linewidth: 20 kHz, bath: { occupancy: 0 } }
        stages:
          - name: cool
            duration: 1 ms
            tones: [{ cavity: c, mechanical: m, sideband: red, coupling: 3 kHz }]
            bath: { c: { occupancy: 0.1, excess: 2, relax_time: 0.2 ms } }
          - name: readout
            duration: 1 ms
            tones: [{ cavity: c, mechanical: m, sideband: blue, coupling: 1 kHz }]
        """;

    // n(t) of each bath written out here from the file's numbers, independently of the engine's transient terms.
    private static Matrix<double> Diffusion(Scenario s, int stage, double t)
    {
        // By stage, not by time: the integrator's clock carries rounding across the boundary.
        double nm = 40 + (stage == 1 ? 150 * Math.Exp(-Math.Max(t - 1e-3, 0) / 0.3e-3) : 0);
        var st = s.Stages[stage];
        double nc = stage == 0 ? 0.1 + 2 * Math.Exp(-t / 0.2e-3) : 0;
        var fixedBaths = st with { BathOverrides = st.BathOverrides.SetItem("m", new Bath(nm)).SetItem("c", new Bath(nc)) };
        return ModelBuilder.Build(s, fixedBaths).Diffusion;
    }

    /// <summary>
    /// The exact propagation against a classical fourth-order Runge–Kutta integration of dV/dt = AV + VAᵀ + D(t) with a step
    /// of 40 ns (κ·dt ≈ 5·10⁻³, so its global error is ~10⁻⁹ relative; W. Kutta, Z. Math. Phys. 46, 435 (1901)), at times
    /// inside both stages and at the boundary; we allow 10⁻⁷ relative in the Frobenius norm.
    /// </summary>
    [Fact]
    public void PropagationMatchesAFineRungeKuttaIntegration()
    {
        var scenario = ScenarioLoader.Parse(Yaml);
        var dynamics = Dynamics.Solve(scenario);
        double[] checks = [0.35e-3, 1e-3, 1.2e-3, 2e-3];
        var exact = dynamics.StatesAt(checks);
        var v = dynamics.Boundaries[0].Covariance.Clone();
        double dt = 40e-9, t = 0;
        int next = 0;
        for (int stage = 0; stage < 2; stage++)
        {
            var a = ModelBuilder.Build(scenario, scenario.Stages[stage]).Drift;
            double end = (stage + 1) * 1e-3;
            Matrix<double> F(double time, Matrix<double> x) => a * x + x * a.Transpose() + Diffusion(scenario, stage, time);
            while (t < end - 1e-15)
            {
                double h = Math.Min(dt, end - t);
                if (next < checks.Length && checks[next] < t + h - 1e-15) h = checks[next] - t;
                var k1 = F(t, v);
                var k2 = F(t + h / 2, v + k1 * (h / 2));
                var k3 = F(t + h / 2, v + k2 * (h / 2));
                var k4 = F(t + h, v + k3 * h);
                v += (k1 + 2 * k2 + 2 * k3 + k4) * (h / 6);
                t += h;
                if (next < checks.Length && Math.Abs(t - checks[next]) < 1e-15)
                {
                    double error = (v - exact[next].Covariance).FrobeniusNorm() / v.FrobeniusNorm();
                    Assert.True(error < 1e-7, $"t = {checks[next]}: relative difference {error:G3}");
                    next++;
                }
            }
        }
        Assert.Equal(checks.Length, next);
        // The model's own D(t) is the one written out here.
        foreach (var (stage, time) in new[] { (0, 0.1e-3), (1, 1.25e-3) })
        {
            var d = ModelBuilder.DiffusionAt(scenario, scenario.Stages[stage], stage * 1e-3, time);
            Assert.True((d - Diffusion(scenario, stage, time)).FrobeniusNorm() < 1e-12 * d.FrobeniusNorm());
        }
    }

    /// <summary>The same physics through the paths fits use: excess and relax_time resolve, and a larger excess heats more.</summary>
    [Fact]
    public void ExcessAndRelaxTimeAreParameters()
    {
        var scenario = ScenarioLoader.Parse(Yaml);
        var excess = ParameterPath.Parse("modes.m.bath.excess", scenario);
        var tau = ParameterPath.Parse("modes.m.bath.relax_time", scenario);
        Assert.Equal(150, excess.Get(scenario));
        Assert.Equal(0.3e-3, tau.Get(scenario), 15);
        double n0 = Dynamics.Solve(scenario).StateAt(1.5e-3).Moments("m").Occupancy;
        double n1 = Dynamics.Solve(excess.Set(scenario, 300)).StateAt(1.5e-3).Moments("m").Occupancy;
        Assert.True(n1 > n0);
        // Before its stage the excess is absent: the cooling stage does not see it.
        Assert.Equal(Dynamics.Solve(scenario).StateAt(0.9e-3).Moments("m").Occupancy, Dynamics.Solve(excess.Set(scenario, 300)).StateAt(0.9e-3).Moments("m").Occupancy, 12);
    }

    [Fact]
    public void AnUnknownFromStageIsNamed()
    {
        var e = Assert.Throws<ScenarioException>(() => ScenarioLoader.Parse(Yaml.Replace("from_stage: readout", "from_stage: redout")));
        Assert.Contains(e.Problems, p => p.Path == "modes.m.bath.from_stage" && p.Message.Contains("readout"));
    }
}

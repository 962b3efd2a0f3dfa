using Decohere.Analyses.Sweeps;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Sweeps;

public class SweepMetricTests
{
    private static readonly Scenario Demo = ScenarioLoader.Demo();

    [Fact]
    public void TemperatureSweepGivesTheThermalDecoherenceRate()
    {
        var sweep = Sweep.Parse(Demo, ["modes.drum.bath.temperature=2mK:200mK:7:log"], false, "thermal_decoherence_rate,steady_squeezing_db:squeeze");
        Assert.Equal("thermal_decoherence_rate_per_s.drum", sweep.Metrics[0].Column);
        // Γ_th = γ·n_th with n_th = 1/(exp(hf/k_BT) − 1) (Bose–Einstein), h and k_B exact (CODATA 2018), γ = 2π·0.15 Hz
        // and f = 4.1 MHz from the demo file.
        const double h = 6.62607015e-34, kB = 1.380649e-23;
        for (long p = 0; p < sweep.Grid.PointCount; p++)
        {
            var row = sweep.Evaluate(p);
            double t = 0.002 * Math.Pow(100, p / 6.0);
            Assert.Equal(t, row.Parameters[0], t * 1e-13);
            double n = 1 / (Math.Exp(h * 4.1e6 / (kB * t)) - 1);
            double rate = 2 * Math.PI * 0.15 * n;
            Assert.Equal("", row.Error);
            Assert.Equal(rate, row.Metrics[0]!.Value, rate * 1e-12);
            Assert.Equal(Seeds.DeriveSeed(20261201, SeedStream.SweepPoint, p), row.Seed);
        }
    }

    [Fact]
    public void LifetimeMetricsFollowTheSingleModeLaw()
    {
        var sweep = Sweep.Parse(Demo, ["modes.drum.bath.temperature=10mK,20mK,40mK"], false, "physical_lifetime,observable_lifetime");
        Assert.Equal(["physical_lifetime_s.squeeze", "observable_lifetime_s.squeeze"], sweep.Metrics.Select(m => m.Column).ToArray());
        const double h = 6.62607015e-34, kB = 1.380649e-23; // CODATA 2018, exact
        double k = 2 * Math.PI * 210e3, g = 2 * Math.PI * 0.15, gm = 2 * Math.PI * 25e3, gp = 2 * Math.PI * 18e3, nc = 0.04;
        for (long p = 0; p < 3; p++)
        {
            var row = sweep.Evaluate(p);
            Assert.Equal("", row.Error);
            double nth = 1 / (Math.Exp(h * 4.1e6 / (kB * row.Parameters[0])) - 1);
            // The squeeze stage ends at its steady state, V₀ = [Γe^{−2r}(n_c+½) + γ(n_th+½)c]/(Γ + γc) (PHYSICS.md check value);
            // the released drum then decoheres as a single damped mode: t* = (1/γ) ln[(n_th + ½ − V₀)/n_th] (PHYSICS.md).
            double rate = 4 * (gm * gm - gp * gp) / k, c = 1 + (rate + g) / k;
            double v0 = (rate * (gm - gp) / (gm + gp) * (nc + 0.5) + g * (nth + 0.5) * c) / (rate + g * c);
            double tStar = Math.Log((nth + 0.5 - v0) / nth) / g;
            Assert.Equal(tStar, row.Metrics[0]!.Value, tStar * 1e-8);
            // The readout adds noise and samples finitely: it resolves the squeezing for less long.
            Assert.InRange(row.Metrics[1]!.Value, 0.2 * tStar, tStar);
        }
    }

    [Fact]
    public void TwoToneSteadyStateMatchesTheClosedFormAndAnUnstablePointIsRecorded()
    {
        var sweep = Sweep.Parse(Demo, ["stages.squeeze.tones[1].coupling=5kHz,12kHz,18kHz,24kHz,26kHz"], false,
            "steady_var_min:squeeze,max_re_lambda:squeeze,end_occupancy:release");
        Assert.Equal(["steady_var_min.squeeze", "max_re_lambda_per_s.squeeze", "end_occupancy.release"], sweep.Metrics.Select(m => m.Column).ToArray());
        const double h = 6.62607015e-34, kB = 1.380649e-23; // CODATA 2018, exact
        double k = 2 * Math.PI * 210e3, g = 2 * Math.PI * 0.15, gm = 2 * Math.PI * 25e3;
        double nth = 1 / (Math.Exp(h * 4.1e6 / (kB * 0.015)) - 1), nc = 0.04;
        for (long p = 0; p < 4; p++)
        {
            var row = sweep.Evaluate(p);
            double gp = row.Parameters[0] * 2 * Math.PI;
            // Full rotating-wave model with the cavity kept: V_min = [Γe^{−2r}(n_c+½) + γ(n_th+½)c]/(Γ + γc),
            // Γ = 4(G₋² − G₊²)/κ, e^{−2r} = (G₋ − G₊)/(G₋ + G₊), c = 1 + (Γ + γ)/κ (PHYSICS.md check value,
            // bad-cavity limit of A. Kronwald, F. Marquardt, A. A. Clerk, Phys. Rev. A 88, 063833 (2013)).
            double rate = 4 * (gm * gm - gp * gp) / k, c = 1 + (rate + g) / k;
            double expected = (rate * (gm - gp) / (gm + gp) * (nc + 0.5) + g * (nth + 0.5) * c) / (rate + g * c);
            Assert.Equal("", row.Error);
            Assert.Equal(expected, row.Metrics[0]!.Value, expected * 1e-8);
            Assert.True(row.Metrics[1] < 0);
        }
        // G₊ > G₋: the Bogoliubov mode is amplified, there is no steady state (common practice; Kronwald et al. need G₊ < G₋).
        var unstable = sweep.Evaluate(4);
        Assert.Null(unstable.Metrics[0]);
        Assert.True(unstable.Metrics[1] > 0);
        Assert.NotNull(unstable.Metrics[2]); // the time evolution still exists
        Assert.Contains("has no steady state", unstable.Error);
    }

    [Fact]
    public void SteadyStatesWithoutPropagationAreThoseOfTheSolvedDynamics()
    {
        // A point's steady state skips the propagation through the stages; the propagating path (Dynamics.Solve, whose
        // steady state is checked against Kronwald et al. above) is the reference, bit for bit and word for word: stable
        // points, a stage without a steady state, a stage amplifying past the growth limit (Dynamics.MaxGrowthFolds), and
        // a steady initial state whose first stage has none.
        var blueFirst = Demo with
        {
            Initial = Demo.Initial.SetItem("drum", new InitialState.Steady()),
            Stages = Demo.Stages.SetItem(0, Demo.Stages[0] with { Tones = [.. Demo.Stages[0].Tones, Demo.Stages[1].Tones[1]] }),
        };
        foreach (var (template, vary) in new[]
        {
            (Demo, "stages.squeeze.tones[1].coupling=5kHz,18kHz,26kHz,40kHz,300kHz"),
            (blueFirst, "stages.prepare.tones[1].coupling=5kHz,30kHz"),
        })
        {
            var sweep = Sweep.Parse(template, [vary, "modes.drum.bath.temperature=10mK,50mK"], false, "steady_squeezing_db:squeeze,steady_var_min:prepare");
            for (long p = 0; p < sweep.Grid.PointCount; p++)
            {
                var row = sweep.Evaluate(p);
                var values = new double[2];
                sweep.Grid.ValuesAt(p, values);
                var scenario = sweep.Grid.Apply(template, values);
                var expected = new List<string>();
                double? Reference(int stage, Func<ModeMoments, double> pick)
                {
                    try
                    {
                        return pick(Dynamics.Solve(scenario).SteadyState(stage).Moments("drum"));
                    }
                    catch (Exception e) when (e is UnstableDynamicsException)
                    {
                        if (!expected.Contains(e.Message)) expected.Add(e.Message);
                        return null;
                    }
                }
                Assert.Equal(Reference(1, m => m.SqueezingDb), row.Metrics[0]);
                Assert.Equal(Reference(0, m => m.VarMin), row.Metrics[1]);
                Assert.Equal(string.Join("; ", expected), row.Error);
            }
        }
    }

    [Fact]
    public void AnInvalidValueIsAFailedPointNotAFailedSweep()
    {
        var sweep = Sweep.Parse(Demo, ["modes.drum.linewidth=0.15Hz,0"], false, null);
        Assert.Equal(["steady_squeezing_db.squeeze", "max_re_lambda_per_s.squeeze"], sweep.Metrics.Select(m => m.Column).ToArray());
        var bad = sweep.Evaluate(1);
        Assert.All(bad.Metrics, Assert.Null);
        Assert.Contains("modes.drum.linewidth", bad.Error);
        Assert.Contains("> 0", bad.Error);
        Assert.Equal("", sweep.Evaluate(0).Error);
    }

    [Theory]
    [InlineData("squeezing", "unknown metric 'squeezing'; metrics: steady_var_min[:STAGE]")]
    [InlineData("steady_var_min:cool", "no stage 'cool'; stages: prepare, squeeze, release")]
    [InlineData("thermal_decoherence_rate:cavity", "no mode 'cavity'; modes: drum, lc")]
    [InlineData("resolution_probability:5 kHz", "expected a time")]
    [InlineData("max_re_lambda,max_re_lambda:squeeze", "more than once")]
    public void BadMetricsAreNamed(string list, string expected) =>
        Assert.Contains(expected, Assert.Throws<InputException>(() => Metrics.ParseList(list, Demo)).Message);

    [Fact]
    public void ResolutionProbabilityUsesTheReadoutDelay()
    {
        var sweep = Sweep.Parse(Demo, ["readout.added_noise=0,1.3"], false, "resolution_probability,resolution_probability:0 ms");
        Assert.Equal("resolution_probability.delay_0.008_s", sweep.Metrics[0].Column);
        var clean = sweep.Evaluate(0);
        var noisy = sweep.Evaluate(1);
        // Right after the squeeze (7.5 dB below zero-point) 2000 shots with no added noise resolve squeezing almost surely;
        // after 8 ms of rethermalisation at γ·n_th ≈ 72 quanta/s the drum is far above zero-point and never does
        // (common practice: the χ² bound on 2000 shots is within ±7% of the variance).
        Assert.True(clean.Metrics[1] > 0.999);
        Assert.True(clean.Metrics[0] < 1e-6);
        Assert.True(noisy.Metrics[1] < clean.Metrics[1]);
    }
}

using MathNet.Numerics.LinearAlgebra;
using Decohere.Engine;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Tests.Engine;

/// <summary>The one propagator (<see cref="Dynamics"/>): many states against one-shot propagation, and the output grid.</summary>
public class PropagatorTests
{
    /// <summary>Three driven stages (the last one still driven, so the undriven continuation differs from it) and a displaced drum.</summary>
    private static Scenario ThreeStages(string durations = "[37 us, 23 us, 19 us]", string step = "7 us")
    {
        var d = durations.Trim('[', ']').Split(',').Select(s => s.Trim()).ToArray();
        return ScenarioLoader.Parse($$"""
            name: three-stages
            model: full
            modes:
              drum: { kind: mechanical, frequency: 4.1 MHz, linewidth: 2 kHz, bath: { occupancy: 30 } }
              lc: { kind: cavity, frequency: 5.3 GHz, linewidth: 210 kHz, bath: { occupancy: 0.04 } }
            initial:
              drum: { state: coherent, x: 3, p: -1 }
            stages:
              - name: cool
                duration: {{d[0]}}
                tones: [{ cavity: lc, mechanical: drum, sideband: red, coupling: 8 kHz }]
              - name: squeeze
                duration: {{d[1]}}
                tones:
                  - { cavity: lc, mechanical: drum, sideband: red, coupling: 8 kHz }
                  - { cavity: lc, mechanical: drum, sideband: blue, coupling: 5 kHz }
              - name: probe
                duration: {{d[2]}}
                tones: [{ cavity: lc, mechanical: drum, sideband: red, coupling: 3 kHz }]
            output: { step: {{step}} }
            """, "three-stages");
    }

    /// <summary>
    /// The reference: from the initial state, one Van Loan step per stage up to t (C. F. Van Loan, IEEE Trans. Autom.
    /// Control 23, 395 (1978)), with models built here, past the end from the last stage with its tones removed.
    /// </summary>
    private static (Matrix<double> V, Vector<double> Mean) OneShot(Scenario scenario, GaussianState initial, double t)
    {
        var stages = scenario.Stages.Add(scenario.Stages[^1] with { Tones = [], DurationS = double.PositiveInfinity });
        var v = initial.Covariance;
        var mean = initial.Mean;
        double start = 0;
        foreach (var stage in stages)
        {
            double dt = Math.Min(t - start, stage.DurationS);
            if (dt <= 0) break;
            var model = ModelBuilder.Build(scenario, stage);
            var step = VanLoan.Discretize(model.Drift, model.Diffusion, dt);
            v = step.Phi * v * step.Phi.Transpose() + step.Q;
            mean = step.Phi * mean;
            start += stage.DurationS;
        }
        return (v, mean);
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void StatesAtManyTimesEqualOneShotPropagation(bool withStageEnds)
    {
        var scenario = ThreeStages();
        var dynamics = Dynamics.Solve(scenario, continuePastEnd: true);
        double end = dynamics.EndS;
        // Evenly spaced times across both inner boundaries and 50 µs past the end, a repeated time and random times,
        // handed over in shuffled order. Without the stage ends among them, a gap that spans a boundary has to restart
        // from the later stage's start state; with them, the walk passes through the exact boundary states.
        var times = Enumerable.Range(0, 42).Select(k => k * 3.1e-6).ToList();
        if (withStageEnds) times.AddRange(Enumerable.Range(0, 3).Select(dynamics.StageEnd));
        times.Add(times[7]);
        var random = new Random(5);
        times.AddRange(Enumerable.Range(0, 25).Select(_ => random.NextDouble() * (end + 50e-6)));
        times = [.. times.OrderBy(_ => random.Next())];
        Assert.Contains(times, t => t > end + 40e-6);

        var states = dynamics.StatesAt(times);
        for (int k = 0; k < times.Count; k++)
        {
            var (v, mean) = OneShot(scenario, dynamics.Boundaries[0], times[k]);
            double dv = (states[k].Covariance - v).FrobeniusNorm() / v.FrobeniusNorm();
            double dm = (states[k].Mean - mean).L2Norm() / mean.L2Norm();
            Assert.True(dv < 1e-12 && dm < 1e-12, $"t = {times[k]:R}: relative error {dv:G3} (covariance), {dm:G3} (mean)");
        }
    }

    [Fact]
    public void StageEndsGiveTheExactBoundaryStates()
    {
        var dynamics = Dynamics.Solve(ThreeStages());
        var ends = Enumerable.Range(0, 3).Select(dynamics.StageEnd).ToArray();
        var states = dynamics.StatesAt([.. ends, 1e-6]);
        for (int i = 0; i < 3; i++)
            Assert.Equal(dynamics.Boundaries[i + 1].Covariance, states[i].Covariance);
        // Within the boundary tolerance of the end is the end; beyond it is an error unless the dynamics continue.
        Assert.Equal(dynamics.Boundaries[3].Covariance, dynamics.StateAt(dynamics.EndS * (1 + 0.5 * Dynamics.BoundaryTolerance)).Covariance);
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => dynamics.StateAt(dynamics.EndS * (1 + 1e-9)));
        Assert.Contains("past the end of the scenario", e.Message);
    }

    [Fact]
    public void ContinuationPastTheEndSwitchesTheDrivesOff()
    {
        // Past the end only the last stage's tones go: a 3 kHz red tone still cools the drum, so the undriven state differs.
        var scenario = ThreeStages();
        var off = Dynamics.Solve(scenario, continuePastEnd: true);
        var driven = Dynamics.Solve(scenario with { Stages = scenario.Stages.SetItem(2, scenario.Stages[2] with { DurationS = 1 }) });
        double t = off.EndS + 30e-6;
        Assert.Equal(Dynamics.ExtensionStageName, off.Stages[^1].Name);
        Assert.Empty(off.Stages[^1].Tones);
        var undriven = off.StateAt(t).Moments("drum").VarX;
        var stillDriven = driven.StateAt(t).Moments("drum").VarX;
        Assert.True(undriven > stillDriven * 1.001, $"undriven {undriven}, driven {stillDriven}");
    }

    [Fact]
    public void GridHitsEveryStageEndAndEveryMultipleOfTheStepExactly()
    {
        // 30 µs is 3·(10 µs) in decimal but not in binary (3·1e-5 ≠ 3e-5): the grid must hold it once, as the stage end.
        var dynamics = Dynamics.Solve(ThreeStages("[30 us, 25 us, 4.3 ms]", "10 us"));
        var grid = dynamics.OutputGrid();
        double step = grid.StepS;
        Assert.True(Math.Abs(step - 1e-5) < 1e-18, $"step {step:R}");
        var times = grid.Times;
        Assert.Equal(0.0, times[0]);
        for (int k = 1; k < times.Length; k++)
            Assert.True(times[k] > times[k - 1] * (1 + 1e-9), $"times[{k}] = {times[k]:R} after {times[k - 1]:R}");
        var ends = Enumerable.Range(0, 3).Select(dynamics.StageEnd).ToArray();
        for (int i = 0; i < 3; i++)
        {
            int at = times.IndexOf(ends[i]);
            Assert.True(at > 0, $"stage end {ends[i]:R} not in the grid");
            Assert.Equal(i, grid.Stages[at]);
            if (i < 2) Assert.Equal(dynamics.StageStarts[i + 1], ends[i]);
        }
        // The expected grid in exact decimal arithmetic: 0, 10, 20, 30 | 40, 50, 55 | 60, 70, …, 4350 µs. Every time is the
        // double nearest its decimal, bit for bit (a running sum t += step, or the binary product k·step, is off by ulps).
        var expected = new List<decimal> { 0, 10, 20, 30, 40, 50, 55 };
        for (decimal u = 60; u < 4355; u += 10) expected.Add(u);
        expected.Add(4355);
        Assert.Equal(expected.Count, times.Length);
        for (int k = 0; k < times.Length; k++)
            Assert.True(times[k] == (double)(expected[k] * 1e-6m), $"times[{k}] = {times[k]:R}, expected {expected[k]} µs");
        Assert.Equal([0, 0, 0, 0, 1, 1, 1], grid.Stages.Take(7));
    }

    [Theory]
    [InlineData(1.1e-7)]
    [InlineData(1e-5)]
    [InlineData(3.7e-9)]
    [InlineData(0.123456789012345)]
    [InlineData(2.5)]
    public void GridTimesAreTheDoublesNearestTheDecimalProducts(double step)
    {
        // The reference is .NET's text-to-double conversion, which rounds correctly (IEEE 754-2008, sec. 5.12): the
        // decimal k·digits·10⁻ˢ as text, parsed. k runs over small values and across the point where k·digits passes 2⁵³;
        // beyond it the conversion of a decimal rounds twice (its digits to a double, then the division), so within an ulp.
        var digits = decimal.GetBits((decimal)step);
        long mantissa = (uint)digits[0] | (long)(uint)digits[1] << 32;
        int scale = (digits[3] >> 16) & 0xFF;
        long switchover = (1L << 53) / mantissa;
        var ks = Enumerable.Range(0, 2000).Select(k => (long)k)
            .Concat(Enumerable.Range(-50, 100).Select(d => switchover + d).Where(k => k > 0 && k * step < 1e25));
        foreach (long k in ks)
        {
            var exact = (System.Numerics.BigInteger)k * mantissa;
            double expected = double.Parse($"{exact}E-{scale}", System.Globalization.CultureInfo.InvariantCulture);
            double t = Dynamics.GridTime(k, step), ulp = exact < 1L << 53 ? 0 : Math.BitIncrement(expected) - expected;
            Assert.True(Math.Abs(t - expected) <= ulp, $"k = {k}: {t:R}, expected {expected:R}");
        }
    }

    [Fact]
    public void SamplePathStepsFollowTheGridAndNeverSpanABoundary()
    {
        var dynamics = Dynamics.Solve(ThreeStages());
        var grid = dynamics.OutputGrid();
        var path = dynamics.PathStepsThrough(grid.Times);
        Assert.Equal(grid.Times.Length - 1, path.StepOf.Length);
        for (int k = 0; k < path.StepOf.Length; k++)
        {
            double gap = grid.Times[k + 1] - grid.Times[k];
            Assert.True(Math.Abs(path.Steps[path.StepOf[k]].Step - gap) <= 1e-14 * grid.Times[k + 1], $"step {k}");
        }
        // Evenly spaced interior points share one discretisation per stage: at most first, uniform and last gap per stage.
        Assert.True(path.Steps.Length <= 9, $"{path.Steps.Length} discretisations");
        var e = Assert.Throws<ArgumentException>(() => dynamics.PathStepsThrough([0, 30e-6, 40e-6]));
        Assert.Contains("squeeze", e.Message);
    }
}

using System.Globalization;
using System.Text;
using Decohere.Engine;
using Decohere.Scenarios;

namespace Decohere.Tests.Engine;

/// <summary>Several modes: collective dissipation through one cavity, and a 40-mode chain (80×80 drift).</summary>
public class MultiModeTests
{
    private static Scenario TwoDrums(string model, double kappaHz) => ScenarioLoader.Parse($"""
        name: two-drums
        model: {model}
        modes:
          a: {"{"} kind: mechanical, frequency: 6.2 MHz, linewidth: 1 Hz, bath: {"{"} occupancy: 30 {"}"} {"}"}
          b: {"{"} kind: mechanical, frequency: 6.9 MHz, linewidth: 1 Hz, bath: {"{"} occupancy: 30 {"}"} {"}"}
          c: {"{"} kind: cavity, frequency: 7 GHz, linewidth: {kappaHz.ToString("R", CultureInfo.InvariantCulture)}, bath: {"{"} occupancy: 0 {"}"} {"}"}
        stages:
          - name: entangle
            duration: 1 ms
            tones:
              - {"{"} cavity: c, mechanical: a, sideband: red, coupling: 30 kHz {"}"}
              - {"{"} cavity: c, mechanical: b, sideband: blue, coupling: 20 kHz {"}"}
        """);

    [Fact]
    public void CollectiveDissipationOfTwoModesOnOneCavity()
    {
        // Red on a and blue on b through one cavity cool the Bogoliubov mode G₋a + G₊b† (two-mode squeezing of a and b),
        // a collective jump in the effective model and a three-mode Hamiltonian in the full one; for κ ≫ G they agree
        // (adiabatic elimination, PHYSICS.md); the Bogoliubov quadrature is squeezed below zero-point.
        var effective = Dynamics.Solve(TwoDrums("effective", 20e6)).SteadyState(0);
        var full = Dynamics.Solve(TwoDrums("full", 20e6)).SteadyState(0);
        for (int k = 0; k < 4; k++)
            for (int l = 0; l < 4; l++)
                Assert.True(Math.Abs(effective.Covariance[k, l] - full.Covariance[k, l]) < 2e-3 * Math.Abs(full.Covariance[0, 0]),
                    $"V[{k},{l}] effective {effective.Covariance[k, l]} vs full {full.Covariance[k, l]}");
        // Joint quadrature X = (x_a + x_b)/√2 of the Bogoliubov mode β ∝ G₋a + G₊b†: x_β ∝ G₋x_a + G₊x_b.
        double gm = 30, gp = 20, norm = Math.Sqrt(gm * gm + gp * gp);
        double[] w = [gm / norm, 0, gp / norm, 0];
        double variance = 0;
        for (int k = 0; k < 4; k++) for (int l = 0; l < 4; l++) variance += w[k] * full.Covariance[k, l] * w[l];
        Assert.True(variance < 0.5, $"joint variance {variance} should be below zero-point");
        Assert.True(full.UncertaintyMargin() > -1e-10);
    }

    private static Scenario Chain(int cells, bool uniform, out string text)
    {
        var yaml = new StringBuilder("name: chain\nmodes:\n");
        for (int i = 0; i < cells; i++)
        {
            double n = uniform ? 3.0 : 1 + i % 5;
            yaml.Append(CultureInfo.InvariantCulture, $"  c{i}: {{ kind: cavity, frequency: {5 + 0.01 * i} GHz, linewidth: 200 kHz, bath: {{ occupancy: {(uniform ? 3.0 : 0.05)} }} }}\n");
            yaml.Append(CultureInfo.InvariantCulture, $"  m{i}: {{ kind: mechanical, frequency: {4 + 0.1 * i} MHz, linewidth: 2 Hz, bath: {{ occupancy: {n} }} }}\n");
        }
        yaml.Append("couplings:\n");
        for (int i = 0; i + 1 < cells; i++)
            yaml.Append(CultureInfo.InvariantCulture, $"  - {{ modes: [c{i}, c{i + 1}], kind: beam-splitter, rate: 80 kHz }}\n");
        yaml.Append("stages:\n  - name: cool\n    duration: 50 us\n    tones:\n");
        for (int i = 0; i < cells; i++)
            yaml.Append(CultureInfo.InvariantCulture, $"      - {{ cavity: c{i}, mechanical: m{i}, sideband: red, coupling: {10 + i} kHz }}\n");
        yaml.Append("output:\n  step: 1 us\n");
        text = yaml.ToString();
        return ScenarioLoader.Parse(text);
    }

    [Fact]
    public void FortyModeChainInEquilibriumIsThermal()
    {
        // A passive (beam-splitter-only) network whose every mode sees the same bath occupancy n relaxes to the thermal
        // state (n + ½)I: it is a fixed point of the Lyapunov equation (detailed balance; common practice).
        var dynamics = Dynamics.Solve(Chain(20, uniform: true, out _));
        Assert.Equal(80, dynamics.Models[0].Dimension);
        var steady = dynamics.SteadyState(0).Covariance;
        var expected = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseIdentity(80) * 3.5;
        Assert.True((steady - expected).FrobeniusNorm() < 1e-9 * expected.FrobeniusNorm());
        Assert.True(dynamics.SteadyResidual(0) < 1e-10);
    }

    [Fact]
    public void FortyModeChainOutOfEquilibrium()
    {
        var dynamics = Dynamics.Solve(Chain(20, uniform: false, out _));
        var steady = dynamics.SteadyState(0);
        Assert.True(dynamics.SteadyResidual(0) < 1e-10, $"residual {dynamics.SteadyResidual(0)}");
        Assert.True(steady.UncertaintyMargin() > -1e-9);
        // Every mechanical mode is cooled below its own bath by its red tone (sideband cooling, PHYSICS.md).
        for (int i = 0; i < 20; i++)
            Assert.True(steady.Moments($"m{i}").Occupancy < 1 + i % 5, $"m{i}");
        // 25 steps of the 80×80 system on the output grid agree with one exact propagation over 25 µs.
        var evolution = Evolution.Run(dynamics);
        Assert.Equal(51, evolution.Times.Length);
        Assert.Equal(25e-6, evolution.Times[25], 15);
        var direct = dynamics.StateAt(25e-6);
        for (int j = 0; j < 40; j++)
        {
            Assert.Equal(direct.Moments(j).VarX, evolution.Moments[25, j].VarX, 10);
            Assert.Equal(direct.Moments(j).CovXP, evolution.Moments[25, j].CovXP, 10);
        }
    }
}

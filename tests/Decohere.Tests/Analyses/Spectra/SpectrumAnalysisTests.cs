using MathNet.Numerics.Integration;
using Decohere.Analyses.Spectra;
using Decohere.Core;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Reports;
using Decohere.Scenarios;
using Decohere.Tests.Engine;

namespace Decohere.Tests.Analyses.Spectra;

public class SpectrumAnalysisTests
{
    /// <summary>
    /// ∫ S̄(ω) dω/2π = V: adaptive Gauss–Kronrod quadrature of the spectrum (MathNet.Numerics, independent of our Lyapunov
    /// solvers) against the Bartels–Stewart/Kronecker steady state, for every diagonal element of a cavity cooling and
    /// weakly amplifying a drum (linewidths from 5 Hz to 300 kHz in one integrand).
    /// </summary>
    [Fact]
    public void IntegralOfTheSpectrumIsTheLyapunovVariance()
    {
        var scenario = TestScenarios.Optomechanical("full", kappaHz: 300e3, gammaHz: 5, nth: 40, nc: 0.3, redHz: 8e3, blueHz: 3e3);
        var model = ModelBuilder.Build(scenario, scenario.Stages[0]);
        var v = Lyapunov.Solve(model.Drift, model.Diffusion).Covariance;
        var response = new LinearResponse(model);
        for (int i = 0; i < model.Dimension; i++)
        {
            // The diagonal of S̄ is even in ω: twice the integral over ω > 0, split on a geometric ladder of breakpoints
            // from 1 s⁻¹ to 10⁸ s⁻¹ and a tail ω = 10⁸/t, t ∈ (0, 1].
            double S(double w) => response.At(w, [i / 2]).Of(i / 2).Symmetrised[i % 2, i % 2].Real;
            double total = GaussKronrodRule.Integrate(S, 0, 1, out _, out _, 1e-12);
            for (double a = 1; a < 1e8; a *= 4)
                total += GaussKronrodRule.Integrate(S, a, Math.Min(4 * a, 1e8), out _, out _, 1e-12);
            total += GaussKronrodRule.Integrate(t => S(1e8 / t) * 1e8 / (t * t), 1e-9, 1, out _, out _, 1e-12);
            Assert.Equal(v[i, i], 2 * total / (2 * Math.PI), v[i, i] * 1e-7);
        }
    }

    /// <summary>
    /// A damped, detuned mode (γ, δ, bath n): S̄_xx = (γ(n + ½)/2)[L(ω − δ) + L(ω + δ)], L(y) = 1/(y² + γ²/4), and the
    /// ordered spectra γn·L(ω − δ) (emission) and γ(n + 1)·L(ω − δ) (absorption): the Lorentzians of a thermal oscillator
    /// (A. A. Clerk et al., Rev. Mod. Phys. 82, 1155 (2010), sec. II.C and app. D, in our rotating frame).
    /// </summary>
    [Fact]
    public void DampedOscillatorIsItsLorentzian()
    {
        double gammaHz = 20, n = 7.5, deltaHz = 35;
        var scenario = ScenarioLoader.Parse($$"""
            name: lorentz
            modes:
              m: { kind: mechanical, frequency: 4 MHz, linewidth: {{TestScenarios.F(gammaHz)}}, bath: { occupancy: {{TestScenarios.F(n)}} } }
            stages:
              - { name: hold, duration: 1 s, detuning: { m: {{TestScenarios.F(deltaHz)}} Hz } }
            """);
        var result = SpectrumAnalysis.Solve(scenario, new SpectrumSettings { PointsPerSide = 200 });
        var s = result.Spectra.Single(x => x.Field == SpectrumField.Mode);
        double g = 2 * Math.PI * gammaHz, d = 2 * Math.PI * deltaHz;
        double L(double y) => 1 / (y * y + g * g / 4);
        for (int k = 0; k < result.FrequenciesHz.Length; k += 7)
        {
            double w = 2 * Math.PI * result.FrequenciesHz[k];
            double sxx = g * (n + 0.5) / 2 * (L(w - d) + L(w + d));
            Assert.Equal(sxx, s.Sxx[k], sxx * 1e-9);
            Assert.Equal(sxx, s.Spp[k], sxx * 1e-9);
            Assert.Equal(g * n * L(w - d), s.Normal[k], g * n * L(w - d) * 1e-9);
            Assert.Equal(g * (n + 1) * L(w - d), s.Antinormal[k], g * (n + 1) * L(w - d) * 1e-9);
        }
    }

    /// <summary>
    /// Weak probes (C = 4G²/κγ = 10⁻⁴) and a cold cavity: the red probe's sideband is Γn and the blue one's Γ(n + 1), so
    /// the asymmetry is n/(n + 1) and the naive reading returns the bath's n (A. H. Safavi-Naeini et al., Phys. Rev. Lett.
    /// 108, 033602 (2012); M. Aspelmeyer et al., Rev. Mod. Phys. 86, 1391 (2014)). Corrections are O(C) and O(γ/κ), 10⁻⁴
    /// here; we allow 10⁻³ relative. A hot cavity (n_c = 0.5) must bias the reading by more than that.
    /// </summary>
    [Fact]
    public void WeakProbesOnAColdCavityReadTheSidebandAsymmetry()
    {
        double nth = 2.5, kappaHz = 100e3, gammaHz = 10;
        double g = Math.Sqrt(1e-4 * kappaHz * gammaHz) / 2;
        var cold = SpectrumAnalysis.Solve(TestScenarios.Optomechanical("full", kappaHz, gammaHz, nth, 0, g, g), new SpectrumSettings { PointsPerSide = 50 });
        var a = Assert.Single(cold.Asymmetries);
        Assert.Equal(nth / (nth + 1), a.Ratio, nth / (nth + 1) * 1e-3);
        Assert.Equal(nth, a.NaiveOccupancy!.Value, nth * 1e-3);
        var red = cold.Sidebands.Single(s => s.Sideband == Sideband.Red);
        Assert.Equal(red.RatePerS * nth, red.PowerPerS, red.RatePerS * nth * 1e-3);

        var hot = SpectrumAnalysis.Solve(TestScenarios.Optomechanical("full", kappaHz, gammaHz, nth, 0.5, g, g), new SpectrumSettings { PointsPerSide = 50 });
        Assert.True(Math.Abs(hot.Asymmetries[0].NaiveOccupancy!.Value - nth) > 1e-2 * nth);
    }

    /// <summary>
    /// The probe's sideband power, κΔn from the steady states, equals the integral of its output spectrum above the
    /// cavity's own output (quadrature of the table's probe rows against a closed energy balance).
    /// </summary>
    [Fact]
    public void SidebandPowerIsTheAreaOfTheOutputSpectrum()
    {
        var scenario = TestScenarios.Optomechanical("full", 200e3, 50, 3, 0, 1e3, 0);
        var result = SpectrumAnalysis.Solve(scenario, new SpectrumSettings { PointsPerSide = 2000 });
        var probe = result.Spectra.Single(s => s.Field == SpectrumField.Probe);
        double area = SpectrumAnalysis.Trapezoid(result.FrequenciesHz, probe.Normal);
        Assert.Equal(result.Sidebands[0].PowerPerS, area, result.Sidebands[0].PowerPerS * 2e-3);
        // A cold cavity's reflected vacuum carries no photons: the output equals the probe spectrum here.
        var output = result.Spectra.Single(s => s.Field == SpectrumField.Output).Normal;
        double peak = probe.Normal.Max();
        Assert.All(Enumerable.Range(0, output.Length), k => Assert.Equal(probe.Normal[k], output[k], peak * 1e-12));
    }

    /// <summary>The table read back by DuckDB (an independent Parquet reader): columns, rows, and ∫ s_xx df ≈ var_x by SQL.</summary>
    [Fact]
    public async Task TableReadsBackThroughDuckDb()
    {
        var scenario = TestScenarios.Optomechanical("full", 200e3, 50, 3, 0, 1e3, 0);
        var result = SpectrumAnalysis.Solve(scenario, new SpectrumSettings { PointsPerSide = 300 });
        string dir = TestPaths.NewTempDirectory();
        var paths = await new SpectrumReport().WriteAsync(result, dir);
        Assert.Equal(["spectrum.json", "spectrum.parquet", "spectrum.png", "spectrum.svg"], paths.Select(Path.GetFileName));
        string file = DuckDb.Literal(Path.Combine(dir, "spectrum.parquet"));
        var names = DuckDb.Query($"SELECT column_name FROM (DESCRIBE SELECT * FROM read_parquet({file}))").Select(r => (string)r[0]!).ToArray();
        Assert.Equal(["frequency_hz", "mode", "field", "tone_offset_hz", "s_xx", "s_pp", "s_normal", "s_antinormal"], names);
        var integral = DuckDb.Query($"""
            SELECT sum((frequency_hz - f0) * (s_xx + s0) / 2) FROM (
              SELECT frequency_hz, s_xx, lag(frequency_hz) OVER (ORDER BY frequency_hz) AS f0, lag(s_xx) OVER (ORDER BY frequency_hz) AS s0
              FROM read_parquet({file}) WHERE mode = 'm' AND field = 'mode')
            """);
        double varX = result.Modes.Single(m => m.Mode == "m").VarX;
        Assert.Equal(varX, Convert.ToDouble(integral[0][0]), varX * 2e-3);
        var probe = DuckDb.Query($"SELECT min(tone_offset_hz - frequency_hz), max(tone_offset_hz - frequency_hz) FROM read_parquet({file}) WHERE field = 'probe:0'");
        // A red tone sits f_m below the cavity, so offsets from the tone are f + f_m.
        Assert.Equal(4e6, Convert.ToDouble(probe[0][0]), 1e-3);
        Assert.Equal(4e6, Convert.ToDouble(probe[0][1]), 1e-3);
    }

    [Fact]
    public void AnUnknownStageIsNamed()
    {
        var e = Assert.Throws<InputException>(() => SpectrumAnalysis.Solve(ScenarioLoader.Demo(), new SpectrumSettings { Stage = "nope" }));
        Assert.StartsWith("stage:", e.Message);
    }
}

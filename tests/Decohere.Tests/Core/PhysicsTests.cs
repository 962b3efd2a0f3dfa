using Decohere.Core;

namespace Decohere.Tests.Core;

public class PhysicsTests
{
    [Fact]
    public void ConstantsAreTheExactSiValues()
    {
        // CODATA 2018 / SI 2019: h and k_B are defined exactly.
        Assert.Equal(6.62607015e-34, Physics.Planck);
        Assert.Equal(1.380649e-23, Physics.Boltzmann);
    }

    [Theory]
    // Bose–Einstein n = 1/(exp(hf/kT) − 1), evaluated by hand from the exact constants:
    // hf/kT for 4.1 MHz at 15 mK = 6.62607015e-34·4.1e6/(1.380649e-23·0.015) = 0.013118...
    [InlineData(4.1e6, 0.015)]
    [InlineData(5.3e9, 0.015)]
    [InlineData(1e9, 1.0)]
    public void OccupancyIsBoseEinstein(double f, double t)
    {
        double x = 6.62607015e-34 * f / (1.380649e-23 * t);
        double expected = 1 / (Math.Exp(x) - 1);
        Assert.Equal(expected, Physics.Occupancy(f, t), 1e-9 * expected);
        Assert.Equal(t, Physics.Temperature(f, Physics.Occupancy(f, t)), 1e-12 * t);
    }

    [Fact]
    public void HighTemperatureLimitIsEquipartition()
    {
        // Classical limit n ≈ k_B T/(h f) − ½ for k_B T ≫ h f (common practice, series of the Bose–Einstein law).
        double f = 1e3, t = 1.0;
        double classical = 1.380649e-23 * t / (6.62607015e-34 * f) - 0.5;
        Assert.Equal(classical, Physics.Occupancy(f, t), 1e-6 * classical);
    }

    [Fact]
    public void TemperatureOfOneQuantumAtOneGigahertz()
    {
        // n = 1 ⇔ hf/kT = ln 2 ⇒ T = hf/(k_B ln 2) = 6.62607015e-25/(1.380649e-23·0.693147...) = 0.0692384 K (hand calculation, h/k_B = 4.799243e-11 K s).
        Assert.Equal(6.62607015e-25 / (1.380649e-23 * Math.Log(2)), Physics.Temperature(1e9, 1.0), 1e-15);
        Assert.Equal(0.0692384, Physics.Temperature(1e9, 1.0), 1e-7);
    }

    [Fact]
    public void SqueezingIsQuotedAgainstZeroPoint()
    {
        // PHYSICS.md: S = 10·log10(½ / V_min); "5 dB of squeezing" is V_min = ½·10^(−0.5) ≈ 0.158; a thermal state
        // (n = 1, V = 1.5) is 10·log10(1/3) = −4.771 dB; zero-point is 0 dB.
        Assert.Equal(5, Physics.SqueezingDb(0.5 / Math.Sqrt(10)), 1e-14);
        Assert.Equal(0.158113883, Physics.VarianceAtSqueezing(5), 1e-9);
        Assert.Equal(-4.771212547, Physics.SqueezingDb(1.5), 1e-9);
        Assert.Equal(0, Physics.SqueezingDb(0.5));
        Assert.Equal(double.PositiveInfinity, Physics.SqueezingDb(0));
    }

    [Fact]
    public void OccupancyOfThermalAndCoherentStates()
    {
        // Thermal: V = (n + ½)·I gives n. Coherent |α⟩ with α = (x + ip)/√2: V = ½·I, occupancy |α|² = (x² + p²)/2.
        Assert.Equal(3.25, Physics.ModeOccupancy(3.75, 3.75, 0, 0), 1e-15);
        Assert.Equal(5.0, Physics.ModeOccupancy(0.5, 0.5, 3, -1), 1e-15);
    }

    [Fact]
    public void PrincipalVariancesAreTheEigenvaluesOfTheBlock()
    {
        // Independent method: the symmetric eigensolver on the 2×2 block.
        double vx = 1.7, vp = 0.4, c = -0.6;
        var eig = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(new[,] { { vx, c }, { c, vp } })
            .Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric).EigenValues.Select(e => e.Real).Order().ToArray();
        var (min, max) = Physics.PrincipalVariances(vx, vp, c);
        Assert.Equal(eig[0], min, 1e-14);
        Assert.Equal(eig[1], max, 1e-14);
    }

    [Fact]
    public void ThermalDecoherenceRateIsGammaTimesBathOccupancy()
    {
        // PHYSICS.md: Γ_th = γ n_th, the rate at which a mode released from its ground state gains quanta (not γ(n_th + 1),
        // the emission rate, nor γ(n_th + ½)). The demo drum: γ = 2π·0.15 s⁻¹, n_th = k_BT/hf − ½ + O(hf/k_BT) = 75.73,
        // so Γ_th = 71.38 s⁻¹ (hand calculation).
        double gamma = 2 * Math.PI * 0.15, nth = Physics.Occupancy(4.1e6, 0.015);
        Assert.Equal(71.38, Physics.ThermalDecoherenceRate(gamma, nth), 0.01);
    }

    [Fact]
    public void CooperativityIsFourGSquaredOverKappaGammaInAngularRates()
    {
        // C = 4G²/(κγ) with G, κ, γ as angular rates (Aspelmeyer, Kippenberg, Marquardt, RMP 86, 1391 (2014), eq. for C):
        // G/2π = 20 kHz, κ/2π = 1 MHz, γ/2π = 10 Hz gives 4·(2π·2e4)²/((2π·1e6)(2π·10)) = 160.
        double g = 2 * Math.PI * 2e4, kappa = 2 * Math.PI * 1e6, gamma = 2 * Math.PI * 10;
        Assert.Equal(4 * g * g / (kappa * gamma), Physics.Cooperativity(2e4, 1e6, 10), 1e-9);
        Assert.Equal(160, Physics.Cooperativity(2e4, 1e6, 10), 1e-9);
        Assert.Equal(2e4, Physics.CouplingForCooperativity(160, 1e6, 10), 1e-8);
    }
}

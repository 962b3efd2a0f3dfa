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
}

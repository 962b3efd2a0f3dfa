namespace Decohere.Core;

/// <summary>Exact SI constants and the Bose–Einstein relations between bath temperature and occupancy.</summary>
public static class Physics
{
    /// <summary>Planck constant h in J s, exact (CODATA 2018; SI 2019).</summary>
    public const double Planck = 6.62607015e-34;

    /// <summary>Boltzmann constant k_B in J/K, exact (CODATA 2018; SI 2019).</summary>
    public const double Boltzmann = 1.380649e-23;

    /// <summary>Zero-point (vacuum) variance of one quadrature, in quanta, with x = (a + a†)/√2.</summary>
    public const double ZeroPointVariance = 0.5;

    /// <summary>Bose–Einstein occupancy n = 1/(exp(h f / k_B T) − 1) of a mode at frequency f (Hz), temperature T (K).</summary>
    public static double Occupancy(double frequencyHz, double temperatureK)
    {
        if (temperatureK <= 0) return 0;
        double x = Planck * frequencyHz / (Boltzmann * temperatureK);
        // expm1 keeps the high-temperature limit k_B T / h f accurate.
        return 1.0 / Math.Expm1Safe(x);
    }

    /// <summary>
    /// Noise of an amplifier of noise temperature T at frequency f in quanta, k_B·T/(h·f): the Rayleigh–Jeans reading of a
    /// noise temperature (common practice for microwave amplifiers). It differs from a Bose–Einstein reading by about ½
    /// quantum when k_B·T is comparable to h·f.
    /// </summary>
    public static double NoiseQuanta(double temperatureK, double frequencyHz) => Boltzmann * temperatureK / (Planck * frequencyHz);

    /// <summary>Inverse of <see cref="Occupancy"/>: T = h f / (k_B ln(1 + 1/n)).</summary>
    public static double Temperature(double frequencyHz, double occupancy)
    {
        if (occupancy <= 0) return 0;
        return Planck * frequencyHz / (Boltzmann * Math.Log1P(1.0 / occupancy));
    }

    /// <summary>Angular rate (s⁻¹) of an ordinary frequency (Hz): 2π f.</summary>
    public static double Angular(double hertz) => 2 * System.Math.PI * hertz;

    private static class Math
    {
        public static double Expm1Safe(double x) =>
            System.Math.Abs(x) < 1e-5 ? x + x * x / 2 + x * x * x / 6 : System.Math.Exp(x) - 1;

        public static double Log1P(double x) =>
            System.Math.Abs(x) < 1e-5 ? x - x * x / 2 + x * x * x / 3 : System.Math.Log(1 + x);
    }
}

namespace Decohere.Core;

/// <summary>
/// Exact SI constants, the Bose–Einstein relations between bath temperature and occupancy, and the quantities derived
/// from a mode's moments in the project's conventions (zero-point variance ½, x = (a + a†)/√2): each defined here once.
/// </summary>
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
        return 1.0 / Expm1(x);
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
        return Planck * frequencyHz / (Boltzmann * Log1P(1.0 / occupancy));
    }

    /// <summary>Angular rate (s⁻¹) of an ordinary frequency (Hz): 2π f.</summary>
    public static double Angular(double hertz) => 2 * Math.PI * hertz;

    /// <summary>Squeezing against zero-point, S = 10·log10(½ / V_min) dB (S &gt; 0 below zero-point); +∞ when V_min ≤ 0.</summary>
    public static double SqueezingDb(double varMin) => varMin > 0 ? 10 * Math.Log10(ZeroPointVariance / varMin) : double.PositiveInfinity;

    /// <summary>Inverse of <see cref="SqueezingDb"/>: the variance ½·10^(−S/10) that is S dB below zero-point.</summary>
    public static double VarianceAtSqueezing(double db) => ZeroPointVariance * Math.Pow(10, -db / 10);

    /// <summary>Occupancy of a mode from its moments: n = (V_xx + V_pp)/2 − ½ + (⟨x⟩² + ⟨p⟩²)/2.</summary>
    public static double ModeOccupancy(double varX, double varP, double meanX, double meanP) =>
        0.5 * (varX + varP) - ZeroPointVariance + 0.5 * (meanX * meanX + meanP * meanP);

    /// <summary>Eigenvalues (V_min, V_max) of the symmetric 2×2 block [[V_xx, V_xp], [V_xp, V_pp]].</summary>
    public static (double Min, double Max) PrincipalVariances(double varX, double varP, double covXP)
    {
        double mid = 0.5 * (varX + varP);
        double radius = Math.Sqrt(0.25 * (varX - varP) * (varX - varP) + covXP * covXP);
        return (mid - radius, mid + radius);
    }

    /// <summary>Thermal decoherence rate Γ_th = γ·n_th (s⁻¹) of a mode of energy decay rate γ in a bath of occupancy n_th.</summary>
    public static double ThermalDecoherenceRate(double decayRate, double bathOccupancy) => decayRate * bathOccupancy;

    /// <summary>
    /// Optomechanical cooperativity C = 4G²/(κγ) of a tone of coupling G on a cavity of linewidth κ and a mechanical mode
    /// of linewidth γ (Aspelmeyer, Kippenberg, Marquardt, Rev. Mod. Phys. 86, 1391 (2014)); all three as ordinary
    /// frequencies (Hz), since the factors 2π cancel.
    /// </summary>
    public static double Cooperativity(double couplingHz, double cavityLinewidthHz, double mechanicalLinewidthHz) =>
        4 * couplingHz * couplingHz / (cavityLinewidthHz * mechanicalLinewidthHz);

    /// <summary>Inverse of <see cref="Cooperativity"/>: the coupling G/2π (Hz) that reaches cooperativity C.</summary>
    public static double CouplingForCooperativity(double cooperativity, double cavityLinewidthHz, double mechanicalLinewidthHz) =>
        Math.Sqrt(cooperativity * cavityLinewidthHz * mechanicalLinewidthHz) / 2;

    private static double Expm1(double x) => Math.Abs(x) < 1e-5 ? x + x * x / 2 + x * x * x / 6 : Math.Exp(x) - 1;

    private static double Log1P(double x) => Math.Abs(x) < 1e-5 ? x - x * x / 2 + x * x * x / 3 : Math.Log(1 + x);
}

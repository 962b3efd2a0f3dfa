using System.Collections.Immutable;
using System.Diagnostics;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Analyses.Spectra;

/// <summary>Settings of a spectrum analysis.</summary>
public sealed record SpectrumSettings
{
    /// <summary>The stage whose steady state is analysed; null: the last stage with tones, else the last stage.</summary>
    public string? Stage { get; init; }

    /// <summary>Frequencies per side of the grid (log-spaced offsets from the mode's frequency), plus zero.</summary>
    public int PointsPerSide { get; init; } = 400;

    /// <summary>Largest offset (Hz); null: 1000 × the fastest rate of the stage's drift / 2π, so the tails hold under 0.1%.</summary>
    public double? SpanHz { get; init; }

    /// <summary>Transmission η from each cavity's port to the detector (collection, line loss, κ_ext/κ), in (0, 1].</summary>
    public double Efficiency { get; init; } = 1;

    /// <summary>Checks the values; errors name the setting.</summary>
    /// <exception cref="InputException">A value is out of range or the stage unknown.</exception>
    public void Validate(Scenario scenario)
    {
        if (Stage is not null && !scenario.Stages.Any(s => s.Name == Stage))
            throw new InputException($"stage: unknown stage '{Stage}'; stages: {string.Join(", ", scenario.Stages.Select(s => s.Name))}");
        if (PointsPerSide is < 2 or > 100_000) throw new InputException($"points: {PointsPerSide} is out of range; allowed 2 to 100000 per side");
        if (SpanHz is { } span && !(span > 0 && double.IsFinite(span))) throw new InputException($"span: {span} Hz must be finite and > 0");
        if (!(Efficiency > 0 && Efficiency <= 1)) throw new InputException($"efficiency: {Efficiency} is out of range; a transmission is in (0, 1]");
    }
}

/// <summary>What a spectrum row describes.</summary>
public enum SpectrumField
{
    /// <summary>A mode's own quadratures (spectral density in quanta/Hz).</summary>
    Mode,
    /// <summary>The field leaving a cavity in the stage as it is (quanta: photons per second per Hz; vacuum ½).</summary>
    Output,
    /// <summary>The field leaving a cavity when one tone probes it alone (the other tones on that cavity off).</summary>
    Probe,
}

/// <summary>One spectrum on the frequency grid.</summary>
/// <param name="Mode">The mode (or the cavity whose output it is).</param>
/// <param name="Field">What it describes.</param>
/// <param name="Tone">For a probe: the tone's index in the stage.</param>
/// <param name="ToneOffsetHz">For a probe: the tone's frequency relative to the cavity (−f_m for red, +f_m for blue).</param>
/// <param name="Sxx">Symmetrised x spectrum.</param>
/// <param name="Spp">Symmetrised p spectrum.</param>
/// <param name="Normal">∫e^{iωτ}⟨a†(0)a(τ)⟩dτ: emission at the mode's frequency + f (integrates to n; for an output, the photon flux density).</param>
/// <param name="Antinormal">∫e^{iωτ}⟨a(τ)a†(0)⟩dτ: absorption (integrates to n + 1).</param>
public sealed record Spectrum(string Mode, SpectrumField Field, int? Tone, double? ToneOffsetHz,
    ImmutableArray<double> Sxx, ImmutableArray<double> Spp, ImmutableArray<double> Normal, ImmutableArray<double> Antinormal);

/// <summary>A mode's variances from the Lyapunov steady state beside the integrals of its spectra on the grid (trapezoid).</summary>
public sealed record ModeSpectrumSummary(string Mode, ModeKind Kind, double VarX, double VarP, double Occupancy,
    double IntegralSxx, double IntegralSpp, double IntegralNormal, double IntegralAntinormal);

/// <summary>
/// The sideband a tone scatters into its cavity's output, probing alone: integrated photon flux above the cavity's
/// own output without the tone, P = η κ (n_cav,probe − n_cav,off) (photons/s; exact, from the steady states: the
/// net output flux of a one-port cavity is κ(⟨a†a⟩ − n_c)), the measurement rate Γ = 4G²/κ, and the mechanical
/// occupancy while it probes.
/// </summary>
public sealed record SidebandPower(int Tone, string Cavity, string Mechanical, Sideband Sideband, double CouplingHz,
    double RatePerS, double PowerPerS, double MechanicalOccupancy);

/// <summary>
/// Sideband asymmetry of a mechanical mode from a red and a blue probe: ξ = (P₋/Γ₋)/(P₊/Γ₊), which is n/(n + 1) for weak
/// probes and a cold cavity (A. H. Safavi-Naeini et al., Phys. Rev. Lett. 108, 033602 (2012); M. Aspelmeyer, T. J.
/// Kippenberg, F. Marquardt, Rev. Mod. Phys. 86, 1391 (2014), sec. VII.B), so a naive reading infers n = ξ/(1 − ξ).
/// </summary>
public sealed record SidebandAsymmetry(string Mechanical, int RedTone, int BlueTone, double Ratio, double? NaiveOccupancy, double TrueOccupancy);

/// <summary>A measured sideband asymmetry ξ with its standard error, and the probes' coupling G/2π (Hz) if the point sets it.</summary>
public sealed record SidebandRatioPoint(double? CouplingHz, double Ratio, double Error);

/// <summary>The spectra of one stage.</summary>
public sealed record SpectrumResult(
    Scenario Scenario,
    SpectrumSettings Settings,
    string Stage,
    ImmutableArray<double> FrequenciesHz,
    ImmutableArray<Spectrum> Spectra,
    ImmutableArray<ModeSpectrumSummary> Modes,
    ImmutableArray<SidebandPower> Sidebands,
    ImmutableArray<SidebandAsymmetry> Asymmetries,
    Provenance Provenance,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult
{
    /// <inheritdoc/>
    public ResultStatus Status => ResultStatuses.From(Warnings);
}

/// <summary>Stationary noise spectra of a stage by linear response (see <see cref="LinearResponse"/>).</summary>
public static class SpectrumAnalysis
{
    /// <summary>Solves the spectra of the chosen stage.</summary>
    /// <exception cref="InputException">A setting is out of range.</exception>
    /// <exception cref="UnstableDynamicsException">The stage has no steady state.</exception>
    public static SpectrumResult Solve(Scenario scenario, SpectrumSettings? settings = null)
    {
        long start = Stopwatch.GetTimestamp();
        settings ??= new SpectrumSettings();
        settings.Validate(scenario);
        var warnings = new List<string>();
        var stage = settings.Stage is { } name ? scenario.Stages.First(s => s.Name == name)
            : scenario.Stages.LastOrDefault(s => s.Tones.Length > 0) ?? scenario.Stages[^1];
        var model = ModelBuilder.Build(scenario, stage);
        var steady = SteadyState(model, stage.Name);
        var modes = ModelBuilder.StateModes(scenario);
        var freqs = Grid(model, settings);
        var response = new LinearResponse(model);
        int n = modes.Length, count = freqs.Length;
        var sxx = new double[n, count];
        var spp = new double[n, count];
        var normal = new double[n, count];
        var anti = new double[n, count];
        var cavities = scenario.Model == ModelKind.Full
            ? modes.Select((m, j) => (m, j)).Where(p => p.m.Kind == ModeKind.Cavity).Select(p => (p.m, p.j, nc: ModelBuilder.BathOccupancy(scenario, p.m, stage))).ToArray()
            : [];
        var outputs = cavities.Select(_ => new double[4, count]).ToArray();
        // The grid is symmetric about zero: the ordered spectrum at −ω is the one at the mirrored index.
        var at = new LinearResponse.Response[count];
        // Frequencies are independent; the response only reads its matrices.
        Parallel.For(0, count, k => at[k] = response.At(Physics.Angular(freqs[k])));
        for (int k = 0; k < count; k++)
        {
            var r = at[k];
            var mirror = at[count - 1 - k];
            for (int j = 0; j < n; j++)
            {
                var block = r.Of(j);
                sxx[j, k] = block.Symmetrised[0, 0].Real;
                spp[j, k] = block.Symmetrised[1, 1].Real;
                anti[j, k] = LinearResponse.Antinormal(block.Ordered);
                normal[j, k] = LinearResponse.Normal(mirror.Of(j).Ordered);
            }
            for (int c = 0; c < cavities.Length; c++)
            {
                var (mode, j, nc) = cavities[c];
                FillOutput(outputs[c], k, LinearResponse.Output(r.Of(j), mode.DecayRate, nc, settings.Efficiency),
                    LinearResponse.Output(mirror.Of(j), mode.DecayRate, nc, settings.Efficiency));
            }
        }
        var spectra = ImmutableArray.CreateBuilder<Spectrum>();
        var summaries = ImmutableArray.CreateBuilder<ModeSpectrumSummary>();
        for (int j = 0; j < n; j++)
        {
            var row = (double[,] a) => ImmutableArray.Create(Enumerable.Range(0, count).Select(k => a[j, k]).ToArray());
            var s = new Spectrum(modes[j].Name, SpectrumField.Mode, null, null, row(sxx), row(spp), row(normal), row(anti));
            spectra.Add(s);
            double vx = steady[2 * j, 2 * j], vp = steady[2 * j + 1, 2 * j + 1];
            summaries.Add(new ModeSpectrumSummary(modes[j].Name, modes[j].Kind, vx, vp, Physics.ModeOccupancy(vx, vp, 0, 0),
                Trapezoid(freqs, s.Sxx), Trapezoid(freqs, s.Spp), Trapezoid(freqs, s.Normal), Trapezoid(freqs, s.Antinormal)));
        }
        for (int c = 0; c < cavities.Length; c++)
            spectra.Add(Field(cavities[c].m.Name, SpectrumField.Output, null, null, outputs[c], count));

        var sidebands = ImmutableArray.CreateBuilder<SidebandPower>();
        if (scenario.Model == ModelKind.Full)
            for (int t = 0; t < stage.Tones.Length; t++)
            {
                try
                {
                    var (power, probe) = Probe(scenario, stage, t, modes, freqs, settings);
                    sidebands.Add(power);
                    spectra.Add(probe);
                }
                catch (UnstableDynamicsException e)
                {
                    // A blue tone that the red one held in check amplifies alone: it has no stationary sideband to probe.
                    warnings.Add($"no sideband for tone {t}: {e.Message}");
                }
            }
        else if (stage.Tones.Length > 0)
            warnings.Add("model: effective has no cavity modes: the output and sideband spectra need model: full");
        var asymmetries = Asymmetries(sidebands.ToImmutable(), modes, steady);
        if (Math.Abs(settings.Efficiency - 1) > 0 && cavities.Length > 0)
            warnings.Add($"output spectra include a transmission η = {settings.Efficiency:G4} after each cavity port (vacuum enters the loss)");
        if (scenario.Modes.Any(m => scenario.BathOf(m, stage).IsTransient))
            warnings.Add("a relaxing bath is not stationary: the spectra use its settled occupancy");
        return new SpectrumResult(scenario, settings, stage.Name, freqs, spectra.ToImmutable(), summaries.ToImmutable(), sidebands.ToImmutable(),
            asymmetries, Provenance.For(scenario), [.. warnings], WorkStatistics.Since(start, count));
    }

    private static MathNet.Numerics.LinearAlgebra.Matrix<double> SteadyState(LinearModel model, string stage)
    {
        var drift = LyapunovOperator.Of(model.Drift);
        var stability = Stability.Of(drift);
        if (!stability.IsStable)
            throw new UnstableDynamicsException(stability.GrowthRate,
                $"stage '{stage}' has no steady state (it grows at {stability.GrowthRate:G4} s⁻¹), so it has no stationary spectrum");
        return drift.Solve(model.Diffusion).Covariance;
    }

    /// <summary>
    /// Offsets from zero, log-spaced on each side from a hundredth of the slowest decay rate of the drift to the span, so
    /// that a narrow mechanical line beside a wide cavity is resolved; symmetric, with zero in the middle.
    /// </summary>
    public static ImmutableArray<double> Grid(LinearModel model, SpectrumSettings settings)
    {
        var eigen = Lyapunov.Eigenvalues(model.Drift);
        double slowest = eigen.Min(l => Math.Abs(l.Real)), fastest = eigen.Max(l => l.Magnitude);
        double hi = settings.SpanHz ?? 1000 * fastest / (2 * Math.PI);
        double lo = Math.Min(slowest / (2 * Math.PI) / 100, hi / 1e3);
        var side = Ranges.LogSpaced(lo, hi, settings.PointsPerSide);
        return [.. side.Reverse().Select(f => -f), 0.0, .. side];
    }

    /// <summary>∫ y df by the trapezoid rule on the grid.</summary>
    public static double Trapezoid(IReadOnlyList<double> f, IReadOnlyList<double> y)
    {
        double sum = 0;
        for (int k = 1; k < f.Count; k++) sum += 0.5 * (f[k] - f[k - 1]) * (y[k] + y[k - 1]);
        return sum;
    }

    private static void FillOutput(double[,] target, int k, MathNet.Numerics.LinearAlgebra.Matrix<System.Numerics.Complex> s,
        MathNet.Numerics.LinearAlgebra.Matrix<System.Numerics.Complex> mirror)
    {
        target[0, k] = s[0, 0].Real;
        target[1, k] = s[1, 1].Real;
        // Normal ordering counts photons above the vacuum: ūᵀ(S̄ + iΩ/2)u at −ω.
        target[2, k] = LinearResponse.Normal(LinearResponse.OrderedField(mirror));
        target[3, k] = LinearResponse.Antinormal(LinearResponse.OrderedField(s));
    }

    private static Spectrum Field(string mode, SpectrumField field, int? tone, double? offset, double[,] values, int count)
    {
        ImmutableArray<double> Row(int i) => [.. Enumerable.Range(0, count).Select(k => values[i, k])];
        return new Spectrum(mode, field, tone, offset, Row(0), Row(1), Row(2), Row(3));
    }

    /// <summary>
    /// The sideband of tone <paramref name="t"/> of a stage probing its cavity alone (the other tones on that cavity off, tones
    /// on other cavities kept), from two steady states; also the probe's model, for its spectrum.
    /// </summary>
    /// <exception cref="UnstableDynamicsException">The stage with the tone alone, or without it, has no steady state.</exception>
    public static SidebandPower SidebandOf(Scenario scenario, Stage stage, int t, double efficiency = 1) => SidebandOf(scenario, stage, t, efficiency, out _);

    private static SidebandPower SidebandOf(Scenario scenario, Stage stage, int t, double efficiency, out LinearModel probe)
    {
        var modes = ModelBuilder.StateModes(scenario);
        var tone = stage.Tones[t];
        var probeStage = ProbeStage(stage, t);
        var offStage = stage with { Tones = [.. stage.Tones.Where(x => x.Cavity != tone.Cavity)] };
        probe = ModelBuilder.Build(scenario, probeStage);
        var off = ModelBuilder.Build(scenario, offStage);
        var vProbe = SteadyState(probe, $"{stage.Name}' with tone {t} alone on cavity '{tone.Cavity}");
        var vOff = SteadyState(off, $"{stage.Name}' without the tones on cavity '{tone.Cavity}");
        int c = modes.Select(m => m.Name).ToList().IndexOf(tone.Cavity), m = modes.Select(x => x.Name).ToList().IndexOf(tone.Mechanical);
        double kappa = modes[c].DecayRate;
        double Occupancy(MathNet.Numerics.LinearAlgebra.Matrix<double> v, int j) => Physics.ModeOccupancy(v[2 * j, 2 * j], v[2 * j + 1, 2 * j + 1], 0, 0);
        double power = efficiency * kappa * (Occupancy(vProbe, c) - Occupancy(vOff, c));
        double g = Physics.Angular(tone.CouplingHz);
        return new SidebandPower(t, tone.Cavity, tone.Mechanical, tone.Sideband, tone.CouplingHz, 4 * g * g / kappa, power, Occupancy(vProbe, m));
    }

    /// <summary>
    /// The stage and tones of a sideband-asymmetry measurement: the named stage (else the first) with a red and a blue tone on
    /// one mechanical mode.
    /// </summary>
    /// <exception cref="InputException">No such stage, or the stage has no red and blue pair.</exception>
    public static (int Stage, int Red, int Blue) AsymmetryPair(Scenario scenario, string? stage)
    {
        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            var st = scenario.Stages[i];
            if (stage is not null && st.Name != stage) continue;
            for (int r = 0; r < st.Tones.Length; r++)
                for (int b = 0; b < st.Tones.Length; b++)
                    if (st.Tones[r].Sideband == Sideband.Red && st.Tones[b].Sideband == Sideband.Blue && st.Tones[r].Mechanical == st.Tones[b].Mechanical)
                        return (i, r, b);
            if (stage is not null) throw new InputException($"stage: '{stage}' has no red and blue tone on one mechanical mode, which a sideband asymmetry needs");
        }
        throw new InputException(stage is null
            ? "stage: no stage has a red and a blue tone on one mechanical mode, which a sideband asymmetry needs"
            : $"stage: unknown stage '{stage}'; stages: {string.Join(", ", scenario.Stages.Select(x => x.Name))}");
    }

    /// <summary>The asymmetry ξ = (P₋/Γ₋)/(P₊/Γ₊) of a red and a blue tone of a stage, each probing alone (see <see cref="SidebandAsymmetry"/>).</summary>
    /// <exception cref="UnstableDynamicsException">A probe has no steady state.</exception>
    public static double AsymmetryRatio(Scenario scenario, int stage, int red, int blue)
    {
        var st = scenario.Stages[stage];
        var r = SidebandOf(scenario, st, red);
        var b = SidebandOf(scenario, st, blue);
        return r.PowerPerS / r.RatePerS / (b.PowerPerS / b.RatePerS);
    }

    // The stage with tone t alone on its cavity (tones on other cavities kept).
    private static Stage ProbeStage(Stage stage, int t) =>
        stage with { Tones = [.. stage.Tones.Where((x, i) => i == t || x.Cavity != stage.Tones[t].Cavity)] };

    // The sideband and its spectrum in the cavity's output.
    private static (SidebandPower, Spectrum) Probe(Scenario scenario, Stage stage, int t, ImmutableArray<Mode> modes,
        ImmutableArray<double> freqs, SpectrumSettings settings)
    {
        var sideband = SidebandOf(scenario, stage, t, settings.Efficiency, out var probe);
        var tone = stage.Tones[t];
        int c = modes.Select(m => m.Name).ToList().IndexOf(tone.Cavity);
        var cavity = modes[c];
        double kappa = cavity.DecayRate;
        double nc = ModelBuilder.BathOccupancy(scenario, cavity, ProbeStage(stage, t));
        int count = freqs.Length;
        var response = new LinearResponse(probe);
        // Only the cavity's rows of the susceptibility are needed here.
        var at = new LinearResponse.Block[count];
        Parallel.For(0, count, k => at[k] = response.At(Physics.Angular(freqs[k]), [c]).Of(c));
        var values = new double[4, count];
        for (int k = 0; k < count; k++)
            FillOutput(values, k, LinearResponse.Output(at[k], kappa, nc, settings.Efficiency), LinearResponse.Output(at[count - 1 - k], kappa, nc, settings.Efficiency));
        double fm = scenario.ModeNamed(tone.Mechanical).FrequencyHz;
        return (sideband, Field(tone.Cavity, SpectrumField.Probe, t, tone.Sideband == Sideband.Red ? -fm : fm, values, count));
    }

    private static ImmutableArray<SidebandAsymmetry> Asymmetries(ImmutableArray<SidebandPower> sidebands, ImmutableArray<Mode> modes,
        MathNet.Numerics.LinearAlgebra.Matrix<double> steady)
    {
        var result = ImmutableArray.CreateBuilder<SidebandAsymmetry>();
        foreach (var group in sidebands.GroupBy(s => s.Mechanical))
        {
            var red = group.FirstOrDefault(s => s.Sideband == Sideband.Red);
            var blue = group.FirstOrDefault(s => s.Sideband == Sideband.Blue);
            if (red is null || blue is null) continue;
            double ratio = red.PowerPerS / red.RatePerS / (blue.PowerPerS / blue.RatePerS);
            int j = modes.Select(m => m.Name).ToList().IndexOf(group.Key);
            double truth = Physics.ModeOccupancy(steady[2 * j, 2 * j], steady[2 * j + 1, 2 * j + 1], 0, 0);
            result.Add(new SidebandAsymmetry(group.Key, red.Tone, blue.Tone, ratio, ratio is > 0 and < 1 ? ratio / (1 - ratio) : null, truth));
        }
        return result.ToImmutable();
    }
}

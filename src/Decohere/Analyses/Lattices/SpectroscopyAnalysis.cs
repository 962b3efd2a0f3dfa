using System.Collections.Immutable;
using System.Diagnostics;
using System.Numerics;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Core;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Analyses.Lattices;

/// <summary>Settings of the mode-shape spectroscopy.</summary>
public sealed record SpectroscopySettings
{
    /// <summary>Photons in the driven collective mode (the same for every mode).</summary>
    public double Photons { get; init; } = 1e6;

    /// <summary>Averaged power spectra per drum and mode: each bin's estimate is Gamma distributed with shape = averages.</summary>
    public int Averages { get; init; } = 200;

    /// <summary>Frequency bins per spectrum, spread over ±4 linewidths about the drum's shifted frequency.</summary>
    public int Points { get; init; } = 61;

    /// <summary>Flat noise floor under each Lorentzian, relative to its peak.</summary>
    public double Floor { get; init; } = 0.05;

    /// <summary>Standard deviation of a measured collective-mode frequency (Hz), e.g. from a transmission fit.</summary>
    public double FrequencyErrorHz { get; init; } = 20e3;

    /// <summary>Seed of the simulated measurement (null: the scenario's).</summary>
    public long? Seed { get; init; }
}

/// <summary>
/// One drum under one driven collective mode. <c>Model*</c> values come from the full linear model (the eigenvalues of
/// the drift with the tone on); <c>Formula*</c> from 4G²/κ with G = g₀√N·|ψ_k(j)|² and the drum's detuning;
/// <c>Measured*</c> from a Lorentzian fit to a simulated averaged spectrum: the damping weight Γ/c = |ψ|⁴ with Gaussian
/// error (the intrinsic linewidth taken as known), and the participation √(Γ/c) for reading.
/// </summary>
public sealed record SpectroscopyRow(
    int ModeIndex, int Site, double ModeFrequencyHz, double ModeLinewidthHz, double DrumDetuningHz,
    double Participation, double ModelDampingHz, double ModelShiftHz, double FormulaDampingHz, double ModelParticipation,
    double MeasuredModeFrequencyHz, double? MeasuredLinewidthHz, double? MeasuredLinewidthErrHz,
    double? MeasuredParticipation, double? MeasuredParticipationErr, double? MeasuredDampingWeight, double? MeasuredDampingWeightErr);

/// <summary>The spectroscopy table with the collective modes it probed.</summary>
public sealed record SpectroscopyResult(
    ModesResult Modes,
    SpectroscopySettings Settings,
    ImmutableArray<SpectroscopyRow> Rows,
    Provenance Provenance,
    ResultStatus Status,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult;

/// <summary>
/// Mode-shape spectroscopy: a red-sideband tone on collective mode k damps drum j at Γ_jk = 4G_jk²/κ_k·L_jk with
/// G_jk = g₀,j√N·|ψ_k(j)|² (the drive's field in cell j, g₀√N·ψ_k(j), times the mode's amplitude there) and the Lorentzian
/// L_jk = 1/(1 + (2δ_j/κ_k)²) of the drum's detuning from the tone's sideband (F. Marquardt et al., Phys. Rev. Lett. 99,
/// 093902 (2007)). The damping and frequency shift reported are the full model's: the eigenvalues of the drift with the
/// tone on, which include the other collective modes and all cells. Inverting the formula for each drum gives the
/// participation |ψ_k(j)|² the data imply.
/// </summary>
public static class SpectroscopyAnalysis
{
    /// <summary>Computes the table and simulates its measurement.</summary>
    public static SpectroscopyResult Solve(Scenario scenario, SpectroscopySettings settings, ModesSettings? modesSettings = null)
    {
        long start = Stopwatch.GetTimestamp();
        Check(settings);
        var lattice = ModesAnalysis.Require(scenario);
        var collective = LatticeModes.Solve(scenario, lattice);
        var modes = ModesAnalysis.Solve(scenario, modesSettings ?? new ModesSettings(), collective);
        int n = lattice.Count;
        long seed = settings.Seed ?? scenario.Seed;
        var rows = new SpectroscopyRow[collective.Length * n];
        var warnings = new List<string>();
        // The drift without tones and frames comes from the model once; each probe adds only Hamiltonian terms to it.
        var idle = new Stage("probe", 1, [], ImmutableDictionary<string, Bath>.Empty, ImmutableDictionary<string, double>.Empty);
        var baseModel = ModelBuilder.Build(scenario with { Stages = [idle] }, idle);
        var baseDrift = AmplitudeDrift(baseModel);
        Parallel.For(0, collective.Length, k =>
        {
            var stage = LatticeLoader.Frame(lattice, scenario.Modes, scenario.Couplings, idle, new CollectiveTone(k, Sideband.Red, settings.Photons), collective);
            var drift = WithHamiltonian(baseDrift, baseModel, stage);
            var (damping, shift) = DrumEigenvalues(drift, baseModel, scenario, lattice, stage);
            var mode = collective[k];
            var frequencyDraw = RandomStream.For(seed, SeedStream.Spectroscopy, k, -1);
            double measuredNu = mode.FrequencyHz + settings.FrequencyErrorHz * frequencyDraw.NextNormal();
            for (int j = 0; j < n; j++)
            {
                var site = lattice.Sites[j];
                double p = mode.Weight(j);
                double delta = stage.DetuningsHz[site.Drum];
                double c = Factor(site.G0Hz, settings.Photons, mode.LinewidthHz, delta);
                double gamma = scenario.ModeNamed(site.Drum).LinewidthHz;
                var random = RandomStream.For(seed, SeedStream.Spectroscopy, k, j);
                var fit = LorentzianFit.Measure(gamma + damping[j], delta + shift[j], settings, ref random);
                double? measured = null, measuredErr = null, weight = null, weightErr = null;
                if (fit is { } f)
                {
                    double g = f.LinewidthHz - gamma;
                    weight = g / c;
                    weightErr = f.LinewidthErrHz / c;
                    // |ψ|² = √(Γ/c); near a node Γ is within its error of zero, so the error is floored at the value σ_Γ gives.
                    measured = Math.Sqrt(Math.Max(g, 0) / c);
                    measuredErr = f.LinewidthErrHz / (2 * c * Math.Max(measured.Value, Math.Sqrt(f.LinewidthErrHz / c)));
                }
                rows[k * n + j] = new SpectroscopyRow(k, j, mode.FrequencyHz, mode.LinewidthHz, delta, p, damping[j], shift[j], c * p * p,
                    Math.Sqrt(Math.Max(damping[j], 0) / c), measuredNu, fit?.LinewidthHz, fit?.LinewidthErrHz, measured, measuredErr, weight, weightErr);
            }
        });
        int failed = rows.Count(r => r.MeasuredLinewidthHz is null);
        if (failed > 0) warnings.Add($"{failed} of {rows.Length} simulated spectra could not be fitted (their rows have no measured values)");
        var detunings = lattice.Sites.Select(x => rows[x.Index].DrumDetuningHz).Order().ToArray();
        double closest = detunings.Zip(detunings.Skip(1), (a, b) => b - a).DefaultIfEmpty(double.PositiveInfinity).Min();
        double strongest = rows.Max(r => r.ModelDampingHz);
        if (strongest > 0.1 * closest)
            warnings.Add($"the strongest optomechanical damping, {strongest:G3} Hz, is {strongest / closest:G3} of the closest drums' frequency distance: the drums hybridise through the driven mode and a damping no longer belongs to one drum (lower the photons or space the drums further)");
        // A drum also feels the collective modes next to the driven one, off resonance by their distance Δ: relative to the
        // driven mode's share they add about (|ψ_q(j)|²/|ψ_k(j)|²)·(κ/2Δ)², so participations read from damping mix neighbours.
        double nearest = collective.Zip(collective.Skip(1), (a, b) => b.FrequencyHz - a.FrequencyHz).DefaultIfEmpty(double.PositiveInfinity).Min();
        double widest = collective.Max(m => m.LinewidthHz);
        if (Math.Pow(widest / (2 * nearest), 2) > 1e-3)
            warnings.Add($"two collective modes are {nearest:G3} Hz apart, only {nearest / widest:G3} linewidths: a tone on one also damps the drums through the other, and the participations read from the damping mix them (compare implied_participation with model_participation)");
        var provenance = modes.Provenance with { Seed = seed };
        return new SpectroscopyResult(modes, settings, [.. rows], provenance, ResultStatuses.From(warnings), [.. warnings], WorkStatistics.Since(start, collective.Length));
    }

    /// <summary>c_jk in Γ_jk = c_jk·|ψ_k(j)|⁴: 4(g₀√N)²/κ_k·1/(1 + (2δ_j/κ_k)²), all in Hz.</summary>
    public static double Factor(double g0Hz, double photons, double modeLinewidthHz, double detuningHz) =>
        4 * g0Hz * g0Hz * photons / modeLinewidthHz / (1 + Math.Pow(2 * detuningHz / modeLinewidthHz, 2));

    private static void Check(SpectroscopySettings s)
    {
        if (!(s.Photons > 0) || !double.IsFinite(s.Photons)) throw new InputException($"photons must be a positive number, got {s.Photons}");
        if (s.Averages < 1) throw new InputException($"averages must be at least 1, got {s.Averages}");
        if (s.Points < 8 || s.Points > 100_000) throw new InputException($"points per spectrum must be from 8 to 100000, got {s.Points}");
        if (!(s.Floor >= 0) || !double.IsFinite(s.Floor)) throw new InputException($"noise floor must be a non-negative number, got {s.Floor}");
        if (!(s.FrequencyErrorHz >= 0) || !double.IsFinite(s.FrequencyErrorHz)) throw new InputException($"mode frequency error must be a non-negative frequency, got {s.FrequencyErrorHz}");
    }

    /// <summary>
    /// The drift of the complex amplitudes. The rotating-wave model is phase invariant (beam splitters, damping,
    /// detunings), so each 2×2 block of A is [[α, β], [−β, α]] and d⟨a⟩/dt = M⟨a⟩ with M_ab = α − iβ: an n×n problem
    /// instead of 2n×2n.
    /// </summary>
    public static Matrix<Complex> AmplitudeDrift(LinearModel model)
    {
        int m = model.ModeNames.Length;
        var a = model.Drift;
        return Matrix<Complex>.Build.Dense(m, m, (i, j) => new Complex(a[2 * i, 2 * j], -a[2 * i, 2 * j + 1]));
    }

    /// <summary>
    /// <paramref name="drift"/> (a stage without tones or detunings) with a stage's detunings and red tones added. Both
    /// are Hamiltonian terms, δa†a and G(a†b + ab†), which the map A = Ω𝐇 turns into −iδ on M's diagonal and −iG
    /// between the two modes; the test suite checks this against the model built with the stage.
    /// </summary>
    public static Matrix<Complex> WithHamiltonian(Matrix<Complex> drift, LinearModel model, Stage stage)
    {
        if (stage.Tones.Any(t => t.Sideband != Sideband.Red)) throw new ArgumentException("only red tones are beam splitters", nameof(stage));
        var m = drift.Clone();
        foreach (var (mode, delta) in stage.DetuningsHz) m[model.IndexOf(mode), model.IndexOf(mode)] += new Complex(0, -Physics.Angular(delta));
        foreach (var tone in stage.Tones)
        {
            int c = model.IndexOf(tone.Cavity), d = model.IndexOf(tone.Mechanical);
            var g = new Complex(0, -Physics.Angular(tone.CouplingHz));
            m[c, d] += g;
            m[d, c] += g;
        }
        return m;
    }

    /// <summary>
    /// Each drum's energy damping (Hz, above its intrinsic linewidth) and frequency shift (Hz) from the eigenvalues of the
    /// amplitude drift of the stage: the eigenvalue λ = −Γ/2 − iω whose eigenvector is largest on a drum is that drum's.
    /// </summary>
    public static (double[] Damping, double[] Shift) DrumEigenvalues(Matrix<Complex> complex, LinearModel model, Scenario scenario, Lattice lattice, Stage stage)
    {
        int m = model.ModeNames.Length;
        var evd = complex.Evd(Symmetricity.Asymmetric);
        var damping = new double[lattice.Count];
        var shift = new double[lattice.Count];
        var vectors = evd.EigenVectors;
        var norms = Enumerable.Range(0, m).Select(e => vectors.Column(e).L2Norm()).ToArray();
        foreach (var site in lattice.Sites)
        {
            int row = model.IndexOf(site.Drum);
            int best = 0;
            double bestWeight = -1;
            for (int e = 0; e < m; e++)
            {
                double w = vectors[row, e].Magnitude / norms[e];
                if (w > bestWeight) { bestWeight = w; best = e; }
            }
            var lambda = evd.EigenValues[best];
            var drum = scenario.ModeNamed(site.Drum);
            damping[site.Index] = -2 * lambda.Real / (2 * Math.PI) - drum.LinewidthHz;
            shift[site.Index] = -lambda.Imaginary / (2 * Math.PI) - stage.DetuningsHz[site.Drum];
        }
        return (damping, shift);
    }
}

using System.Collections.Immutable;
using System.Numerics;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Model;

/// <summary>Builds the linear model of one stage of a scenario, in the frame rotating at each mode's frequency (rotating-wave approximation).</summary>
public static class ModelBuilder
{
    /// <summary>The modes kept in the state vector: all of them (full) or the mechanical ones (effective).</summary>
    public static ImmutableArray<Mode> StateModes(Scenario scenario) => scenario.Model == ModelKind.Full
        ? scenario.Modes
        : [.. scenario.Modes.Where(m => m.Kind == ModeKind.Mechanical)];

    /// <summary>
    /// The settled occupancy of a mode's bath in a stage: the stage's override or the mode's own bath, plus, for a cavity
    /// with a heating law, the extra quanta at the summed cooperativity C = Σ 4G²/(κγ) of the stage's tones on it.
    /// </summary>
    public static double BathOccupancy(Scenario scenario, Mode mode, Stage stage)
    {
        var bath = scenario.BathOf(mode, stage);
        if (bath.Heating is not { } law) return bath.Occupancy;
        return bath.Occupancy + law.ExcessAt(Cooperativity(scenario, mode, stage));
    }

    /// <summary>Summed cooperativity C = Σ 4G²/(κγ) of the stage's tones on a cavity (κ the cavity's, γ each tone's mechanical mode's).</summary>
    public static double Cooperativity(Scenario scenario, Mode cavity, Stage stage) =>
        stage.Tones.Where(t => t.Cavity == cavity.Name)
            .Sum(t => Physics.Cooperativity(t.CouplingHz, cavity.LinewidthHz, scenario.ModeNamed(t.Mechanical).LinewidthHz));

    /// <summary>
    /// The relaxing parts of a stage's diffusion: D(t) = D + Σ_k e^{−(t − t_k)/τ_k} D_k for every transient bath active in the
    /// stage (its from_stage starts at or before the stage). D is affine in each bath occupancy, so D_k is the diffusion with
    /// that bath raised by its excess minus the settled one, for any model (full or effective).
    /// </summary>
    /// <param name="scenario">The scenario.</param>
    /// <param name="stage">The stage (its bath overrides decide the baths).</param>
    /// <param name="stageStartS">Start of the stage (s): a stage override's default reference, and the test of activity.</param>
    public static ImmutableArray<BathTransient> Transients(Scenario scenario, Stage stage, double stageStartS)
    {
        var result = ImmutableArray.CreateBuilder<BathTransient>();
        LinearModel? settled = null;
        foreach (var mode in scenario.Modes)
        {
            var bath = scenario.BathOf(mode, stage);
            if (!bath.IsTransient) continue;
            double start = bath.FromStage is { } from ? scenario.StageStarts[scenario.StageIndex(from)]
                : stage.BathOverrides.ContainsKey(mode.Name) ? stageStartS : 0;
            if (start > stageStartS) continue;
            settled ??= Build(scenario, stage);
            var raised = stage with { BathOverrides = stage.BathOverrides.SetItem(mode.Name, bath with { Occupancy = bath.Occupancy + bath.Excess, Excess = 0 }) };
            var part = Build(scenario, raised).Diffusion - settled.Diffusion;
            if (part.Enumerate().Any(x => x != 0)) result.Add(new BathTransient(part, bath.RelaxTimeS, start));
        }
        return result.ToImmutable();
    }

    /// <summary>The diffusion of a stage at time t (s from the start of the first stage): D + Σ_k e^{−(t − t_k)/τ_k} D_k.</summary>
    public static Matrix<double> DiffusionAt(Scenario scenario, Stage stage, double stageStartS, double t)
    {
        var d = Build(scenario, stage).Diffusion.Clone();
        foreach (var part in Transients(scenario, stage, stageStartS)) d += part.Diffusion * part.WeightAt(t);
        return d;
    }

    /// <summary>The drift and diffusion of a stage.</summary>
    public static LinearModel Build(Scenario scenario, Stage stage) => BuildSystem(scenario, stage).ToLinearModel();

    /// <summary>The Hamiltonian and jump operators of a stage, before the map to drift and diffusion.</summary>
    internal static QuadraticSystem BuildSystem(Scenario scenario, Stage stage)
    {
        var modes = StateModes(scenario);
        var index = Indices(modes);
        var system = new QuadraticSystem(modes.Select(m => m.Name));

        foreach (var mode in modes)
        {
            int j = index[mode.Name];
            system.AddDamping(j, mode.DecayRate, BathOccupancy(scenario, mode, stage));
            if (stage.DetuningsHz.TryGetValue(mode.Name, out double delta))
                system.AddDetuning(j, Physics.Angular(delta));
        }
        AddBilinearTerms(scenario, stage, system, index, static (_, _) => true);
        if (scenario.Model == ModelKind.Effective) AddEliminatedCavities(scenario, stage, system, index);
        return system;
    }

    /// <summary>Position of each state mode in the state vector, by name.</summary>
    internal static Dictionary<string, int> Indices(ImmutableArray<Mode> modes) => modes.Select((m, i) => (m.Name, i)).ToDictionary(p => p.Name, p => p.i);

    /// <summary>
    /// The static couplings and, in the full model, the tones, in this order: the one place the order of the sums in 𝐇 is
    /// fixed, so that <see cref="StageModels"/> can redo the entries of one pair of modes bit for bit.
    /// </summary>
    internal static void AddBilinearTerms(Scenario scenario, Stage stage, QuadraticSystem system, Dictionary<string, int> index, Func<int, int, bool> include)
    {
        // Red sideband: G(a†b + a b†); blue sideband: G(a†b† + a b) (linearised, rotating-wave).
        var terms = scenario.Couplings.Select(c => (c.ModeA, c.ModeB, c.RateHz, BeamSplitter: c.Kind == CouplingKind.BeamSplitter));
        if (scenario.Model == ModelKind.Full) terms = terms.Concat(stage.Tones.Select(t => (t.Cavity, t.Mechanical, t.CouplingHz, t.Sideband == Sideband.Red)));
        foreach (var (modeA, modeB, rateHz, beamSplitter) in terms)
        {
            int a = index[modeA], b = index[modeB];
            if (!include(a, b)) continue;
            if (beamSplitter) system.AddBeamSplitter(a, b, Physics.Angular(rateHz));
            else system.AddTwoModeSqueezing(a, b, Physics.Angular(rateHz));
        }
    }

    /// <summary>
    /// Adiabatic elimination of each driven cavity: jump J = (2/√κ)(Σ_red G₋ b + Σ_blue G₊ b†) as √(n_c+1)·J and √n_c·J†
    /// (collective when one cavity addresses several modes). With sideband corrections each tone also scatters off
    /// resonance at A = G²κ/((κ/2)² + (2ω_m)²) (F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007)).
    /// </summary>
    private static void AddEliminatedCavities(Scenario scenario, Stage stage, QuadraticSystem system, Dictionary<string, int> index)
    {
        foreach (var group in stage.Tones.GroupBy(t => t.Cavity))
        {
            var cavity = scenario.ModeNamed(group.Key);
            double kappa = cavity.DecayRate;
            double nc = BathOccupancy(scenario, cavity, stage);
            var terms = group.Select(t =>
            {
                double g = 2 * Physics.Angular(t.CouplingHz) / Math.Sqrt(kappa);
                return t.Sideband == Sideband.Red
                    ? (index[t.Mechanical], (Complex)g, Complex.Zero)
                    : (index[t.Mechanical], Complex.Zero, (Complex)g);
            }).ToArray();
            system.AddJump(terms.Select(t => (t.Item1, t.Item2 * Math.Sqrt(nc + 1), t.Item3 * Math.Sqrt(nc + 1))).ToArray());
            if (nc > 0)
                system.AddJump(terms.Select(t => (t.Item1, Complex.Conjugate(t.Item3) * Math.Sqrt(nc), Complex.Conjugate(t.Item2) * Math.Sqrt(nc))).ToArray());

            if (!scenario.SidebandCorrections) continue;
            foreach (var tone in group)
            {
                var mech = scenario.ModeNamed(tone.Mechanical);
                double g = Physics.Angular(tone.CouplingHz);
                double omegaM = mech.AngularFrequency;
                double rate = g * g * kappa / (kappa * kappa / 4 + 4 * omegaM * omegaM);
                int j = index[tone.Mechanical];
                // The off-resonant process raises the mode for a red tone and lowers it for a blue one.
                Complex up = Math.Sqrt(rate * (nc + 1)), down = Math.Sqrt(rate * nc);
                if (tone.Sideband == Sideband.Red)
                {
                    system.AddJump((j, Complex.Zero, up));
                    if (nc > 0) system.AddJump((j, down, Complex.Zero));
                }
                else
                {
                    system.AddJump((j, up, Complex.Zero));
                    if (nc > 0) system.AddJump((j, Complex.Zero, down));
                }
            }
        }
    }
}

/// <summary>A relaxing part of the diffusion: e^{−(t − StartS)/RelaxTimeS}·Diffusion for t ≥ StartS.</summary>
/// <param name="Diffusion">D_k, the diffusion of the bath's excess at its full size.</param>
/// <param name="RelaxTimeS">Relaxation time τ_k (s).</param>
/// <param name="StartS">When the excess starts relaxing (s from the start of the first stage).</param>
public sealed record BathTransient(Matrix<double> Diffusion, double RelaxTimeS, double StartS)
{
    /// <summary>e^{−(t − StartS)/τ} (t ≥ StartS; the transient is only built for stages that start after it began).</summary>
    public double WeightAt(double t) => Math.Exp(-Math.Max(t - StartS, 0) / RelaxTimeS);
}

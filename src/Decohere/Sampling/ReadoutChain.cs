using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Sampling;

/// <summary>
/// The measurement chain of a scenario reduced to what the shots need: the measured mode and the input-referred added
/// noise per quadrature (quanta). A phenomenological readout takes <c>readout.added_noise</c>; an amplification readout
/// derives it from its pulse (<see cref="AmplificationReadout"/>).
/// </summary>
public sealed record ReadoutChain(string Mode, int ModeIndex, double AddedNoise, AmplificationReadout? Amplification)
{
    /// <summary>The chain of a scenario with a readout block.</summary>
    /// <exception cref="InputException">No readout block, or an amplification readout without a cavity on the mode.</exception>
    public static ReadoutChain For(Scenario scenario)
    {
        var readout = scenario.Readout ?? throw new InputException("readout: the scenario has no readout block; add one to sample shots");
        int index = ModelBuilder.StateModes(scenario).Select(m => m.Name).ToList().IndexOf(readout.Mode);
        if (index < 0)
            throw new InputException($"readout.mode: '{readout.Mode}' is not in the state vector of the {scenario.Model.ToString().ToLowerInvariant()} model (cavities are eliminated in model: effective); read out a mechanical mode");
        if (readout.Method == ReadoutMethod.Phenomenological)
            return new ReadoutChain(readout.Mode, index, readout.AddedNoise, null);
        var amplification = AmplificationReadout.Compute(scenario);
        return new ReadoutChain(readout.Mode, index, amplification.AddedNoise, amplification);
    }
}

/// <summary>
/// A blue-sideband amplification pulse on the readout mode's cavity, followed by a detector of noise n_det referred to its
/// own input. The gain comes from the model itself, g = (V_out(V₁) − V_out(V₂)) / (V₁ − V₂) over one exact Van Loan step
/// of the pulse; the pulse adds A = V_out(V₁) − g·V₁ at its output, so the chain's input-referred added noise is
/// (A + n_det)/g (C. M. Caves, Phys. Rev. D 26, 1817 (1982); A. A. Clerk et al., Rev. Mod. Phys. 82, 1155 (2010), sec. V).
/// </summary>
/// <param name="Cavity">The cavity the pulse drives.</param>
/// <param name="CouplingHz">Pulse coupling G/2π.</param>
/// <param name="DurationS">Pulse length.</param>
/// <param name="Gain">Power (variance) gain g of the mechanical quadratures.</param>
/// <param name="PulseAddedNoise">Variance A the pulse adds at its output (quanta).</param>
/// <param name="DetectorNoise">Detector noise referred to the detector's input (quanta).</param>
/// <param name="AddedNoise">Total input-referred added noise (A + n_det)/g (quanta per quadrature).</param>
public sealed record AmplificationReadout(string Cavity, double CouplingHz, double DurationS, double Gain,
    double PulseAddedNoise, double DetectorNoise, double AddedNoise)
{
    /// <summary>Derives the pulse's gain and added noise from the scenario's model (full or effective).</summary>
    /// <exception cref="InputException">No tone of any stage couples a cavity to the readout mode.</exception>
    public static AmplificationReadout Compute(Scenario scenario)
    {
        var readout = scenario.Readout ?? throw new InputException("readout: the scenario has no readout block");
        string mech = readout.Mode;
        var tone = scenario.Stages.SelectMany(s => s.Tones).FirstOrDefault(t => t.Mechanical == mech)
            ?? throw new InputException($"readout.method: amplification needs a cavity coupled to '{mech}' by a tone in some stage (none of stages {string.Join(", ", scenario.Stages.Select(s => s.Name))} drives it); use method: phenomenological or add a tone");
        var baseStage = scenario.Stages[scenario.StageIndex(readout.Stage)];
        // The pulse replaces the drives of the readout stage but keeps its baths and detunings.
        var pulse = baseStage with
        {
            Name = "amplification",
            DurationS = readout.AmplificationDurationS,
            Tones = [new Tone(tone.Cavity, mech, Sideband.Blue, readout.AmplificationCouplingHz)],
        };
        var model = ModelBuilder.Build(scenario, pulse);
        var step = VanLoan.Discretize(model.Drift, model.Diffusion, readout.AmplificationDurationS);
        var modes = ModelBuilder.StateModes(scenario);
        int j = model.IndexOf(mech);

        // Every other mode starts in its own bath, uncorrelated; two mechanical input variances fix the affine map.
        Matrix<double> Input(double mechanicalVariance)
        {
            var v = Matrix<double>.Build.Dense(model.Dimension, model.Dimension);
            for (int k = 0; k < modes.Length; k++)
            {
                double value = k == j ? mechanicalVariance : scenario.BathOf(modes[k], pulse).Occupancy + 0.5;
                v[2 * k, 2 * k] = value;
                v[2 * k + 1, 2 * k + 1] = value;
            }
            return v;
        }
        const double v1 = 0.5, v2 = 1.5;
        var out1 = step.Phi * Input(v1) * step.Phi.Transpose() + step.Q;
        var out2 = step.Phi * Input(v2) * step.Phi.Transpose() + step.Q;
        // Phase-insensitive: x and p have the same gain; average them against rounding.
        double gain = 0.5 * ((out2[2 * j, 2 * j] - out1[2 * j, 2 * j]) + (out2[2 * j + 1, 2 * j + 1] - out1[2 * j + 1, 2 * j + 1])) / (v2 - v1);
        double added = 0.5 * (out1[2 * j, 2 * j] + out1[2 * j + 1, 2 * j + 1]) - gain * v1;
        if (!(gain > 0) || !double.IsFinite(gain))
            throw new InputException($"readout.coupling/readout.duration: the amplification pulse has gain {gain:G4}; it must be positive and finite");
        return new AmplificationReadout(tone.Cavity, readout.AmplificationCouplingHz, readout.AmplificationDurationS, gain, added,
            readout.DetectorNoise, (added + readout.DetectorNoise) / gain);
    }
}

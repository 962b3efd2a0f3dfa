using System.Collections.Immutable;
using System.Globalization;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Core;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Model.Readouts;

/// <summary>
/// A blue-sideband amplification pulse on the measured mode's cavity, then the chain after the cavity output. The pulse's
/// gain comes from the model itself, g = (V_out(V₁) − V_out(V₂)) / (V₁ − V₂) over one exact Van Loan step of the pulse; it
/// adds A = V_out(V₁) − g·V₁ at its output, and every later element's noise is divided by g and the gains before it, so the
/// added noise referred to the mode is (A + N_chain)/g (C. M. Caves, Phys. Rev. D 26, 1817 (1982); A. A. Clerk et al.,
/// Rev. Mod. Phys. 82, 1155 (2010), sec. V; H. T. Friis, Proc. IRE 32, 419 (1944)). <see cref="PulseGain"/> is g (power gain
/// of the mechanical quadratures), <see cref="PulseAddedNoise"/> is A, <see cref="Cavity"/> the cavity the pulse drives.
/// </summary>
public sealed record AmplificationReadout(string Mode, int ModeIndex, string Cavity, double PulseGain, double PulseAddedNoise,
    double AddedNoise, double Gain, ImmutableArray<NoiseContribution> Contributions, ImmutableArray<string> Parameters) : IReadoutChain
{
    /// <inheritdoc/>
    public string Method => "amplification";

    /// <summary>Derives the pulse's gain and added noise from the scenario's model (full or effective), then refers the chain.</summary>
    /// <exception cref="InputException">No tone of any stage couples a cavity to the measured mode, or the pulse does not amplify.</exception>
    public static AmplificationReadout Of(Scenario scenario, int modeIndex)
    {
        var readout = scenario.Readout!;
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
                double value = k == j ? mechanicalVariance : scenario.BathOf(modes[k], pulse).Occupancy + Physics.ZeroPointVariance;
                v[2 * k, 2 * k] = value;
                v[2 * k + 1, 2 * k + 1] = value;
            }
            return v;
        }
        const double v1 = 0.5, v2 = 1.5;
        var out1 = step.Phi * Input(v1) * step.Phi.Transpose() + step.Q;
        var out2 = step.Phi * Input(v2) * step.Phi.Transpose() + step.Q;
        // Phase-insensitive: x and p have the same gain; average them against rounding.
        double g = 0.5 * ((out2[2 * j, 2 * j] - out1[2 * j, 2 * j]) + (out2[2 * j + 1, 2 * j + 1] - out1[2 * j + 1, 2 * j + 1])) / (v2 - v1);
        double added = 0.5 * (out1[2 * j, 2 * j] + out1[2 * j + 1, 2 * j + 1]) - g * v1;
        if (!(g > 0) || !double.IsFinite(g) || !double.IsFinite(added))
            throw new InputException($"readout.coupling/readout.duration: the amplification pulse has gain {g:G4}; it must be positive and finite");

        var (chain, chainGain) = FriisCascade.Refer(readout.Elements, g);
        var contributions = ImmutableArray.CreateBuilder<NoiseContribution>(chain.Length + 1);
        contributions.Add(new NoiseContribution("readout (pulse)", string.Create(CultureInfo.InvariantCulture,
            $"blue-sideband pulse on {tone.Cavity}, G/2π {readout.AmplificationCouplingHz / 1e3:G4} kHz for {readout.AmplificationDurationS * 1e6:G4} µs"),
            g, added, added / g));
        contributions.AddRange(chain);
        return new AmplificationReadout(mech, modeIndex, tone.Cavity, g, added, contributions.Sum(c => c.InputReferred), g * chainGain,
            contributions.MoveToImmutable(), ["readout.coupling", "readout.duration", .. FriisCascade.Parameters(readout.Elements)]);
    }
}

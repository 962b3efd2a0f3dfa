using Decohere.Core;
using Decohere.Scenarios;

namespace Decohere.Model;

/// <summary>
/// The linear model of every stage of a template scenario, built once, and of modified copies of it (<c>template with
/// { … }</c>, as sweeps and fits make them). A stage whose inputs a copy shares keeps the template's model (the same
/// instance). In the full model, a copy that differs only in bath occupancies or tone couplings redoes just those terms
/// (a mode's damping rows of C, a pair's entries of 𝐇) in the template's <see cref="QuadraticSystem"/> before the one map
/// to (A, D); the sums run in the order <see cref="ModelBuilder"/> uses, so the models are bit for bit those of a new
/// build, and a stage's model is kept under those occupancies and couplings for the next copy with the same ones. Any
/// other difference is built again by <see cref="ModelBuilder.Build"/>. Thread-safe.
/// </summary>
public sealed class StageModels
{
    private readonly Scenario _template;
    private readonly QuadraticSystem[] _systems;
    private readonly LinearModel[] _models;
    private readonly double[][] _occupancies;
    private readonly Dictionary<string, int> _index;
    // At most this many models are kept for reuse; past it they are built per copy.
    private readonly ExactMemo<LinearModel> _built = new(4096);

    /// <summary>Builds the template's models.</summary>
    public StageModels(Scenario template)
    {
        _template = template;
        var modes = ModelBuilder.StateModes(template);
        _index = ModelBuilder.Indices(modes);
        _systems = [.. template.Stages.Select(s => ModelBuilder.BuildSystem(template, s))];
        _models = [.. _systems.Select(s => s.ToLinearModel())];
        _occupancies = [.. template.Stages.Select(s => modes.Select(m => ModelBuilder.BathOccupancy(template, m, s)).ToArray())];
    }

    /// <summary>The template's model of stage i.</summary>
    public LinearModel Template(int stage) => _models[stage];

    /// <summary>The model of stage i of <paramref name="copy"/>, a modified copy of the template with the same stages and modes.</summary>
    public LinearModel For(Scenario copy, int stage)
    {
        var t = _template;
        var stageNow = copy.Stages[stage];
        if (copy.Model != t.Model || copy.SidebandCorrections != t.SidebandCorrections || copy.Couplings != t.Couplings
            || copy.Stages.Length != t.Stages.Length)
            return ModelBuilder.Build(copy, stageNow);
        var stageThen = t.Stages[stage];
        if (copy.Modes == t.Modes && ReferenceEquals(stageNow, stageThen)) return _models[stage];
        // The effective model mixes each eliminated cavity's jumps into the mechanical rows; only a new build redoes those.
        if (t.Model != ModelKind.Full || stageNow.DetuningsHz != stageThen.DetuningsHz || !SameModesButBaths(copy, t)
            || !SameTonesButCouplings(stageNow, stageThen))
            return ModelBuilder.Build(copy, stageNow);

        // The model is now a function of the stage's bath occupancies and couplings: built once per distinct set.
        int modes = copy.Modes.Length, tones = stageNow.Tones.Length;
        var inputs = new double[modes + tones + 1];
        for (int j = 0; j < modes; j++) inputs[j] = ModelBuilder.BathOccupancy(copy, copy.Modes[j], stageNow);
        for (int k = 0; k < tones; k++) inputs[modes + k] = stageNow.Tones[k].CouplingHz;
        inputs[^1] = stage;
        return _built.GetOrAdd(inputs, () => Update(copy, stage, inputs));
    }

    // The template's system with the copy's occupancies (inputs[j]) and couplings redone, mapped to (A, D).
    private LinearModel Update(Scenario copy, int stage, double[] inputs)
    {
        Stage stageNow = copy.Stages[stage], stageThen = _template.Stages[stage];
        int modes = copy.Modes.Length, tones = stageNow.Tones.Length;
        QuadraticSystem? system = null;
        var before = _occupancies[stage];
        for (int j = 0; j < modes; j++)
            if (!Same(inputs[j], before[j])) (system ??= _systems[stage].Copy()).RedoDamping(j, copy.Modes[j].DecayRate, inputs[j]);
        for (int k = 0; k < tones; k++)
        {
            if (Same(stageNow.Tones[k].CouplingHz, stageThen.Tones[k].CouplingHz)) continue;
            int a = _index[stageNow.Tones[k].Cavity], b = _index[stageNow.Tones[k].Mechanical];
            (system ??= _systems[stage].Copy()).ClearPair(a, b);
            ModelBuilder.AddBilinearTerms(copy, stageNow, system, _index, (x, y) => (x == a && y == b) || (x == b && y == a));
        }
        return system?.ToLinearModel() ?? _models[stage];
    }

    private static bool Same(double x, double y) => BitConverter.DoubleToInt64Bits(x) == BitConverter.DoubleToInt64Bits(y);

    // In the full model a mode enters the stage's model through its name, kind, decay rate and bath occupancy; the
    // occupancy is compared per stage above, the rest must be the template's.
    private static bool SameModesButBaths(Scenario copy, Scenario t)
    {
        if (copy.Modes == t.Modes) return true;
        if (copy.Modes.Length != t.Modes.Length) return false;
        for (int j = 0; j < t.Modes.Length; j++)
        {
            Mode now = copy.Modes[j], then = t.Modes[j];
            if (now.Name != then.Name || now.Kind != then.Kind || !Same(now.LinewidthHz, then.LinewidthHz)) return false;
        }
        return true;
    }

    private static bool SameTonesButCouplings(Stage now, Stage then)
    {
        if (now.Tones == then.Tones) return true;
        if (now.Tones.Length != then.Tones.Length) return false;
        for (int k = 0; k < now.Tones.Length; k++)
        {
            Tone a = now.Tones[k], b = then.Tones[k];
            if (a.Cavity != b.Cavity || a.Mechanical != b.Mechanical || a.Sideband != b.Sideband) return false;
        }
        return true;
    }
}

using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Engine;

/// <summary>
/// The solved dynamics of a scenario: per stage its linear model, stability and start state, so that the state at
/// any time follows exactly from one Van Loan step (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)).
/// </summary>
public sealed class Dynamics
{
    private readonly GaussianState?[] _steady;
    private readonly LyapunovSolution?[] _steadySolution;

    /// <summary>The scenario solved.</summary>
    public Scenario Scenario { get; }

    /// <summary>Modes of the state vector, in order.</summary>
    public ImmutableArray<string> ModeNames { get; }

    /// <summary>Linear model of each stage.</summary>
    public ImmutableArray<LinearModel> Models { get; }

    /// <summary>Eigenvalue stability of each stage.</summary>
    public ImmutableArray<Stability> Stabilities { get; }

    /// <summary>Start time of each stage (s).</summary>
    public ImmutableArray<double> StageStarts { get; }

    /// <summary>State at the start of each stage, plus the final state at index Stages.Length.</summary>
    public ImmutableArray<GaussianState> Boundaries { get; }

    private Dynamics(Scenario scenario)
    {
        Scenario = scenario;
        ModeNames = [.. ModelBuilder.StateModes(scenario).Select(m => m.Name)];
        Models = [.. scenario.Stages.Select(s => ModelBuilder.Build(scenario, s))];
        for (int i = 0; i < Models.Length; i++)
            if (!AllFinite(Models[i].Drift) || !AllFinite(Models[i].Diffusion))
                throw new UnstableDynamicsException(double.NaN,
                    $"stage '{scenario.Stages[i].Name}': the model's rates overflow double precision (in model: effective, 4G²/κ with a tiny κ and a large G); use physical couplings and linewidths");
        Stabilities = [.. Models.Select(m => Stability.Of(m.Drift))];
        for (int i = 0; i < Stabilities.Length; i++)
        {
            double folds = Stabilities[i].GrowthRate * scenario.Stages[i].DurationS;
            if (folds > MaxGrowthFolds)
                throw new UnstableDynamicsException(Stabilities[i].GrowthRate,
                    $"stage '{scenario.Stages[i].Name}' amplifies at {Stabilities[i].GrowthRate:G3} s⁻¹ for {scenario.Stages[i].DurationS:G3} s: " +
                    $"{folds:G3} e-folds of amplitude, more than {MaxGrowthFolds} (the variances would grow by e^{2 * folds:G3}, past double precision); " +
                    $"lower the blue-sideband couplings (stages[{i}].tones) or shorten the stage");
        }
        StageStarts = scenario.StageStarts;
        _steady = new GaussianState?[scenario.Stages.Length];
        _steadySolution = new LyapunovSolution?[scenario.Stages.Length];
        Boundaries = [];
        var initial = InitialStates.Build(scenario, this);
        var boundaries = ImmutableArray.CreateBuilder<GaussianState>(scenario.Stages.Length + 1);
        boundaries.Add(initial);
        for (int i = 0; i < scenario.Stages.Length; i++)
            boundaries.Add(Propagate(boundaries[i], i, scenario.Stages[i].DurationS));
        Boundaries = boundaries.MoveToImmutable();
    }

    /// <summary>
    /// Most amplitude e-folds (growth rate × duration) one stage may amplify by. Variances grow by e^{2·folds}; at 100
    /// folds (10⁸⁷) sums of squares over 10⁹ shots still fit in double range with room to spare, while any amplifier
    /// or parametric instability a lab runs is a few tens of dB (under 10 folds). A blue coupling of 1 MHz held for 1 ms
    /// is 6000 folds and gave NaN in every output.
    /// </summary>
    public const double MaxGrowthFolds = 100;

    private static bool AllFinite(Matrix<double> m) => m.Enumerate().All(double.IsFinite);

    /// <summary>Builds the models, the initial state and the state at every stage boundary.</summary>
    /// <exception cref="UnstableDynamicsException">An <c>initial: steady</c> mode needs a stable first stage; or a stage
    /// amplifies by more than <see cref="MaxGrowthFolds"/> e-folds, or its rates overflow.</exception>
    public static Dynamics Solve(Scenario scenario) => new(scenario);

    /// <summary>Propagates a state through <paramref name="duration"/> seconds of stage <paramref name="stage"/>, exactly.</summary>
    public GaussianState Propagate(GaussianState state, int stage, double duration)
    {
        var model = Models[stage];
        var step = VanLoan.Discretize(model.Drift, model.Diffusion, duration);
        var v = step.Phi * state.Covariance * step.Phi.Transpose() + step.Q;
        v = (v + v.Transpose()) * 0.5;
        return state with { Mean = step.Phi * state.Mean, Covariance = v };
    }

    /// <summary>The stage running at time t (a boundary time belongs to the stage that ends there; t = 0 to the first).</summary>
    public int StageAt(double t)
    {
        for (int i = 0; i < StageStarts.Length; i++)
            if (t <= StageStarts[i] + Scenario.Stages[i].DurationS * (1 + 1e-12)) return i;
        return StageStarts.Length - 1;
    }

    /// <summary>The exact state at time t (s) from the start of the first stage.</summary>
    public GaussianState StateAt(double t)
    {
        int i = StageAt(t);
        double dt = Math.Clamp(t - StageStarts[i], 0, Scenario.Stages[i].DurationS);
        return dt == 0 ? Boundaries[i] : Propagate(Boundaries[i], i, dt);
    }

    /// <summary>Whether stage i has a steady state.</summary>
    public bool HasSteadyState(int stage) => Stabilities[stage].IsStable;

    /// <summary>The steady state of stage i (covariance; mean zero).</summary>
    /// <exception cref="UnstableDynamicsException">The stage has an eigenvalue with Re λ ≥ 0; the message gives the growth rate.</exception>
    public GaussianState SteadyState(int stage)
    {
        if (_steady[stage] is { } cached) return cached;
        var model = Models[stage];
        var s = Stabilities[stage];
        if (!s.IsStable)
            throw new UnstableDynamicsException(s.GrowthRate,
                $"stage '{Scenario.Stages[stage].Name}' has no steady state: it grows at {s.GrowthRate:G4} s⁻¹ (max Re λ of the drift)");
        var solution = Lyapunov.Solve(model.Drift, model.Diffusion);
        _steadySolution[stage] = solution;
        var state = new GaussianState(Vector<double>.Build.Dense(model.Dimension), solution.Covariance, ModeNames);
        _steady[stage] = state;
        return state;
    }

    /// <summary>How the steady state of stage i was solved: method, residual, numerical warnings.</summary>
    public LyapunovSolution SteadySolution(int stage)
    {
        SteadyState(stage);
        return _steadySolution[stage]!;
    }

    /// <summary>Relative residual ‖AV + VAᵀ + D‖ of the steady state of stage i.</summary>
    public double SteadyResidual(int stage) => SteadySolution(stage).RelativeResidual;
}

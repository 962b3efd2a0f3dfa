using MathNet.Numerics.LinearAlgebra;
using System.Collections.Immutable;
using Decohere.Model;
using Decohere.Numerics;
using Decohere.Scenarios;

namespace Decohere.Engine;

/// <summary>Receives the state at one of the times of a walk: its index in the list given, covariance (row-major n×n) and mean.</summary>
/// <remarks>The spans are the walk's working buffers, valid only during the call: copy what you keep.</remarks>
public delegate void StateVisitor(int index, ReadOnlySpan<double> covariance, ReadOnlySpan<double> mean);

/// <summary>The output grid: t = 0, every multiple k·step strictly inside a stage, and every stage end.</summary>
/// <param name="Times">Times (s), strictly increasing.</param>
/// <param name="Stages">Stage of each time (a stage end belongs to the stage that ends there; t = 0 to the first).</param>
/// <param name="StepS">The output step (s).</param>
public sealed record TimeGrid(ImmutableArray<double> Times, ImmutableArray<int> Stages, double StepS);

/// <summary>The exact steps of a sample path through increasing times.</summary>
/// <param name="Steps">The distinct discretisations (Φ, Q), one per (stage, gap).</param>
/// <param name="StepOf">StepOf[k] carries the path from time k to time k + 1.</param>
public sealed record PathSteps(ImmutableArray<Discretization> Steps, ImmutableArray<int> StepOf);

/// <summary>
/// The solved dynamics of a scenario and its one propagator: per stage its linear model, stability and start state, the
/// exact state at any time, the states at many times carried forward with cached exact steps, and the output grid.
/// Within a stage A is constant and D is constant or relaxes exponentially (see <see cref="Step"/>), so every step is exact
/// (C. F. Van Loan, IEEE Trans. Autom. Control 23, 395 (1978)).
/// </summary>
public sealed class Dynamics
{
    /// <summary>
    /// Relative tolerance at stage boundaries: a time within <c>BoundaryTolerance·t_b</c> of a boundary t_b is the boundary.
    /// Far above the rounding of sums of durations (~1e-16), far below any physical time scale of a stage.
    /// </summary>
    public const double BoundaryTolerance = 1e-12;

    /// <summary>Name of the stage appended when the dynamics continue past the end of the scenario.</summary>
    public const string ExtensionStageName = "(after the last stage, undriven)";

    // Two gaps closer than this (relative to the time reached) differ only by the rounding of the times themselves
    // (each time carries at most an ulp, 2ε·t), so they share one discretisation. 8ε with ε = 2⁻⁵².
    private const double GapRounding = 8 * 2.220446049250313e-16;

    private readonly GaussianState?[] _steady;
    private readonly LyapunovSolution?[] _steadySolution;

    /// <summary>The scenario solved.</summary>
    public Scenario Scenario { get; }

    /// <summary>
    /// The stages the engine runs: the scenario's, followed, when <see cref="ContinuesPastEnd"/>, by the last stage with its
    /// tones off and no end (its baths and detunings kept: the drives are switched off after the scenario).
    /// </summary>
    public ImmutableArray<Stage> Stages { get; }

    /// <summary>True when times past the scenario's end are answered with the undriven extension stage.</summary>
    public bool ContinuesPastEnd { get; }

    /// <summary>Modes of the state vector, in order.</summary>
    public ImmutableArray<string> ModeNames { get; }

    /// <summary>Linear model of each of <see cref="Stages"/>.</summary>
    public ImmutableArray<LinearModel> Models { get; }

    /// <summary>The relaxing parts of the diffusion of each of <see cref="Stages"/> (empty for a stage with settled baths).</summary>
    public ImmutableArray<ImmutableArray<BathTransient>> Transients { get; }

    /// <summary>Eigenvalue stability of each of <see cref="Stages"/>.</summary>
    public ImmutableArray<Stability> Stabilities { get; }

    /// <summary>Start time of each of <see cref="Stages"/> (s).</summary>
    public ImmutableArray<double> StageStarts { get; }

    /// <summary>End of the scenario's last stage (s).</summary>
    public double EndS { get; }

    /// <summary>State at the start of each of the scenario's stages, plus the final state at index Scenario.Stages.Length.</summary>
    public ImmutableArray<GaussianState> Boundaries
    {
        get
        {
            if (_allBoundaries.IsDefault) _allBoundaries = [.. Enumerable.Range(0, _boundaries.Length).Select(Boundary)];
            return _allBoundaries;
        }
    }

    // Boundary states are propagated on first use, each from the one before, so they are the same whoever asks first; a
    // fit whose delays end inside a stage never pays for the exponentials of the stage ends after them.
    private readonly GaussianState?[] _boundaries;
    private readonly Lock _boundaryLock = new();
    private ImmutableArray<GaussianState> _allBoundaries;

    private GaussianState Boundary(int i)
    {
        if (Volatile.Read(ref _boundaries[i]) is { } known) return known;
        lock (_boundaryLock)
        {
            for (int k = 1; k <= i; k++)
                if (_boundaries[k] is null) Volatile.Write(ref _boundaries[k], Propagate(_boundaries[k - 1]!, k - 1, Scenario.Stages[k - 1].DurationS));
            return _boundaries[i]!;
        }
    }

    private Dynamics(Scenario scenario, bool continuePastEnd)
    {
        Scenario = scenario;
        ContinuesPastEnd = continuePastEnd;
        var last = scenario.Stages[^1];
        Stages = continuePastEnd
            ? scenario.Stages.Add(last with { Name = ExtensionStageName, Tones = [], DurationS = double.PositiveInfinity })
            : scenario.Stages;
        ModeNames = [.. ModelBuilder.StateModes(scenario).Select(m => m.Name)];
        Models = [.. Stages.Select(s => ModelBuilder.Build(scenario, s))];
        // The extension continues the last stage, so a transient of its bath override keeps that stage's reference time.
        Transients = [.. Stages.Select((s, i) => ModelBuilder.Transients(scenario, s, scenario.StageStarts[Math.Min(i, scenario.Stages.Length - 1)]))];
        for (int i = 0; i < Models.Length; i++)
            if (!AllFinite(Models[i].Drift) || !AllFinite(Models[i].Diffusion))
                throw new UnstableDynamicsException(double.NaN,
                    $"stage '{Stages[i].Name}': the model's rates overflow double precision (in model: effective, 4G²/κ with a tiny κ and a large G); use physical couplings and linewidths");
        Stabilities = [.. Models.Select(m => Stability.Of(m.Drift))];
        for (int i = 0; i < scenario.Stages.Length; i++)
        {
            double folds = Stabilities[i].GrowthRate * scenario.Stages[i].DurationS;
            if (folds > MaxGrowthFolds)
                throw new UnstableDynamicsException(Stabilities[i].GrowthRate,
                    $"stage '{scenario.Stages[i].Name}' amplifies at {Stabilities[i].GrowthRate:G3} s⁻¹ for {scenario.Stages[i].DurationS:G3} s: " +
                    $"{folds:G3} e-folds of amplitude, more than {MaxGrowthFolds} (the variances would grow by e^{2 * folds:G3}, past double precision); " +
                    $"lower the blue-sideband couplings (stages[{i}].tones) or shorten the stage");
        }
        StageStarts = scenario.StageStarts;
        EndS = StageStarts[^1] + last.DurationS;
        if (continuePastEnd) StageStarts = StageStarts.Add(EndS);
        _steady = new GaussianState?[Stages.Length];
        _steadySolution = new LyapunovSolution?[Stages.Length];
        _boundaries = new GaussianState?[scenario.Stages.Length + 1];
        _boundaries[0] = InitialStates.Build(scenario, this);
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
    /// <param name="scenario">The scenario.</param>
    /// <param name="continuePastEnd">Answer times past the scenario's end with its last stage, tones off (see <see cref="Stages"/>).</param>
    /// <exception cref="UnstableDynamicsException">An <c>initial: steady</c> mode needs a stable first stage; or a stage
    /// amplifies by more than <see cref="MaxGrowthFolds"/> e-folds, or its rates overflow.</exception>
    public static Dynamics Solve(Scenario scenario, bool continuePastEnd = false) => new(scenario, continuePastEnd);

    /// <summary>True when t lies after the boundary t_b by more than the <see cref="BoundaryTolerance"/>.</summary>
    public static bool IsAfter(double t, double boundary) => t > boundary + BoundaryTolerance * Math.Abs(boundary);

    /// <summary>True when t lies past the end of the scenario's last stage (beyond the boundary tolerance).</summary>
    public bool IsPastEnd(double t) => IsAfter(t, EndS);

    /// <summary>End of stage i (s); +∞ for the undriven extension.</summary>
    public double StageEnd(int stage) => StageStarts[stage] + Stages[stage].DurationS;

    /// <summary>Propagates a state through <paramref name="duration"/> seconds of stage <paramref name="stage"/>, exactly.</summary>
    public GaussianState Propagate(GaussianState state, int stage, double duration)
    {
        var step = Step(stage, StageStarts[stage], duration);
        return state with { Mean = step.Phi * state.Mean, Covariance = DenseProduct.Congruence(step.Phi, state.Covariance, step.Q) };
    }

    /// <summary>
    /// The exact step (Φ, Q) of stage i from time <paramref name="fromS"/> over <paramref name="duration"/>. With settled baths it
    /// is Van Loan's. A relaxing bath adds e^{−(t − t_k)/τ} D_k to D; over a piece of length h starting at s₀ its noise is
    /// w(s₀) ∫₀^h e^{A(h−s)} D_k e^{Aᵀ(h−s)} e^{−s/τ} ds = w(s₀) e^{−h/τ} ∫₀^h e^{Bu} D_k e^{Bᵀu} du with B = A + I/(2τ)
    /// (substitute u = h − s and split e^{u/τ} = e^{u/2τ}·e^{u/2τ}): Van Loan's integral for the shifted drift, so each piece is
    /// exact. Pieces of at most τ keep the shifted drift from growing by more than e^{1/2}; they are composed as
    /// (Φ₂Φ₁, Φ₂Q₁Φ₂ᵀ + Q₂), and once every excess has decayed below 10⁻¹⁸ of itself the rest is one settled step.
    /// </summary>
    public Discretization Step(int stage, double fromS, double duration)
    {
        var model = Models[stage];
        var transients = Transients[stage];
        const double Negligible = 1e-18;
        if (transients.All(k => k.WeightAt(fromS) < Negligible)) return VanLoan.Discretize(model.Drift, model.Diffusion, duration);
        double tau = transients.Min(k => k.RelaxTimeS);
        // Up to the time every excess is negligible; equal pieces share one set of exponentials.
        double active = Math.Min(duration, transients.Max(k => k.StartS + k.RelaxTimeS * -Math.Log(Negligible)) - fromS);
        int pieces = Math.Max(1, (int)Math.Ceiling(active / tau));
        double h = active / pieces;
        var (settled, shifted) = _pieces.GetOrAdd((stage, h), key =>
        {
            int n = model.Dimension;
            var identity = Matrix<double>.Build.DenseIdentity(n);
            return (VanLoan.Discretize(model.Drift, model.Diffusion, key.Item2),
                [.. transients.Select(k => VanLoan.Discretize(model.Drift + identity / (2 * k.RelaxTimeS), k.Diffusion, key.Item2).Q * Math.Exp(-key.Item2 / k.RelaxTimeS))]);
        });
        var phi = Matrix<double>.Build.DenseIdentity(model.Dimension);
        var q = Matrix<double>.Build.Dense(model.Dimension, model.Dimension);
        for (int p = 0; p < pieces; p++)
        {
            var pieceQ = settled.Q.Clone();
            for (int k = 0; k < transients.Length; k++) pieceQ += shifted[k] * transients[k].WeightAt(fromS + p * h);
            q = DenseProduct.Congruence(settled.Phi, q, pieceQ);
            phi = settled.Phi * phi;
        }
        if (active < duration)
        {
            var rest = VanLoan.Discretize(model.Drift, model.Diffusion, duration - active);
            q = DenseProduct.Congruence(rest.Phi, q, rest.Q);
            phi = rest.Phi * phi;
        }
        return new Discretization(phi, (q + q.Transpose()) * 0.5, duration);
    }

    private readonly System.Collections.Concurrent.ConcurrentDictionary<(int, double), (Discretization, Matrix<double>[])> _pieces = new();

    /// <summary>The stage running at time t (a boundary time belongs to the stage that ends there; t = 0 to the first).</summary>
    /// <exception cref="ArgumentOutOfRangeException">t is negative or NaN, or past the end without <see cref="ContinuesPastEnd"/>.</exception>
    public int StageAt(double t) => StageAt(t, 0);

    private int StageAt(double t, int from)
    {
        if (!(t >= 0)) throw new ArgumentOutOfRangeException(nameof(t), t, "time must be ≥ 0 (s from the start of the first stage)");
        if (IsPastEnd(t) && !ContinuesPastEnd)
            throw new ArgumentOutOfRangeException(nameof(t), t,
                $"time {t:G6} s is past the end of the scenario ({EndS:G6} s); solve with continuePastEnd to continue with the drives off");
        int i = from;
        while (i + 1 < Stages.Length && IsAfter(t, StageEnd(i))) i++;
        return i;
    }

    /// <summary>The exact state at time t (s) from the start of the first stage: one exact step from the start of its stage.</summary>
    /// <exception cref="ArgumentOutOfRangeException">t is negative, or past the end without <see cref="ContinuesPastEnd"/>.</exception>
    public GaussianState StateAt(double t) => StatesAt([t])[0];

    /// <summary>The exact states at the given times (any order; results in the order given). See <see cref="Walk"/>.</summary>
    public GaussianState[] StatesAt(IReadOnlyList<double> times)
    {
        var result = new GaussianState[times.Count];
        int n = 2 * ModeNames.Length;
        Walk(times, (k, v, mean) =>
        {
            result[k] = new GaussianState(Vector<double>.Build.DenseOfArray(mean.ToArray()),
                Matrix<double>.Build.DenseOfRowMajor(n, n, v.ToArray()), ModeNames);
        });
        return result;
    }

    /// <summary>
    /// Visits the exact state at each of <paramref name="times"/> (any order), in increasing time. The state is carried
    /// forward from one time to the next with exact steps (Φ, Q) cached per (stage, gap), so evenly spaced times share one
    /// discretisation; a time in a later stage starts from that stage's exact start state, and a stage end gives
    /// the exact boundary state, so nothing drifts across stages.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">A time is negative, or past the end without <see cref="ContinuesPastEnd"/>.</exception>
    public void Walk(IReadOnlyList<double> times, StateVisitor visit)
    {
        ArgumentNullException.ThrowIfNull(times);
        ArgumentNullException.ThrowIfNull(visit);
        // An output grid arrives in order: walked as given, without a sort or a call through the list per time.
        ReadOnlySpan<double> at = times switch { ImmutableArray<double> a => a.AsSpan(), double[] d => d, _ => [.. times] };
        int[]? order = null;
        for (int k = 1; k < at.Length && order is null; k++)
            if (!(at[k] >= at[k - 1])) order = [.. Enumerable.Range(0, at.Length).OrderBy(i => times[i])];
        int n = 2 * ModeNames.Length;
        var v = new double[n * n];
        var mean = new double[n];
        var cache = new StepCache(this);
        var steppers = new List<CovarianceStepper?>();
        int stage = -1;
        // The state's time as an unevaluated sum hi + lo, so that rounding does not accumulate over many shared steps.
        double hi = 0, lo = 0;
        for (int o = 0; o < at.Length; o++)
        {
            int k = order is null ? o : order[o];
            double t = at[k];
            int i = StageAt(t, Math.Max(stage, 0));
            if (i < Scenario.Stages.Length && !IsAfter(StageEnd(i), t))
            {
                Load(Boundary(i + 1), v, mean);
                (stage, hi, lo) = (i + 1, StageEnd(i), 0);
                // The end state of stage i is the start state of stage i + 1; a later time in stage i cannot follow.
                if (i + 1 == Stages.Length) stage = i;
            }
            else
            {
                if (i != stage)
                {
                    Load(Boundary(i), v, mean);
                    (stage, hi, lo) = (i, StageStarts[i], 0);
                }
                double gap = (t - hi) - lo;
                if (gap > 0)
                {
                    int id = cache.Find(i, gap, t, out double used);
                    while (steppers.Count <= id) steppers.Add(null);
                    (steppers[id] ??= new CovarianceStepper(cache.Steps[id])).Step(v, mean);
                    Advance(ref hi, ref lo, used);
                }
            }
            visit(k, v, mean);
        }
    }

    /// <summary>
    /// The exact steps of a sample path through strictly increasing <paramref name="times"/>: one (Φ, Q) per (stage, gap),
    /// shared between equal gaps. A path cannot restart at a stage's start state, so every stage boundary the path
    /// crosses must be one of the times (the <see cref="OutputGrid"/> has them all).
    /// </summary>
    /// <exception cref="ArgumentException">Times are not strictly increasing, or a gap spans a stage boundary.</exception>
    public PathSteps PathStepsThrough(IReadOnlyList<double> times)
    {
        ArgumentNullException.ThrowIfNull(times);
        var cache = new StepCache(this);
        var stepOf = ImmutableArray.CreateBuilder<int>(Math.Max(times.Count - 1, 0));
        // As in Walk, the path's time is kept as hi + lo and each gap measured from it, so shared steps never drift.
        double hi = times.Count > 0 ? times[0] : 0, lo = 0;
        for (int k = 0; k + 1 < times.Count; k++)
        {
            double from = times[k], to = times[k + 1];
            if (!(to > from)) throw new ArgumentException($"times must increase strictly: times[{k + 1}] = {to:R} after {from:R}", nameof(times));
            int i = StageAt(to, 0);
            if (IsAfter(StageStarts[i], from))
                throw new ArgumentException($"the gap from {from:R} s to {to:R} s spans the start of stage '{Stages[i].Name}' ({StageStarts[i]:R} s); include it in the times", nameof(times));
            stepOf.Add(cache.Find(i, Math.Max((to - hi) - lo, 0), to, out double used));
            Advance(ref hi, ref lo, used);
            if (!IsAfter(StageEnd(i), to)) (hi, lo) = (to, 0);
        }
        return new PathSteps([.. cache.Steps], stepOf.MoveToImmutable());
    }

    /// <summary>
    /// The output grid shared by the covariance table and the trajectories: t = 0, every k·step (k an integer, so no step
    /// error accumulates in the times) strictly inside a stage, and every stage end, exactly as the stage boundaries are.
    /// </summary>
    /// <param name="stepS">Grid step (s); null takes the scenario's <c>output.step</c>.</param>
    /// <exception cref="ArgumentOutOfRangeException">The step is not finite and positive.</exception>
    public TimeGrid OutputGrid(double? stepS = null)
    {
        double step = stepS ?? Scenario.OutputStepS;
        if (!(step > 0) || !double.IsFinite(step)) throw new ArgumentOutOfRangeException(nameof(stepS), step, "the output step must be finite and > 0 (s)");
        double expected = 1 + Scenario.Stages.Sum(s => Math.Ceiling(s.DurationS / step) + 1);
        int capacity = expected < Array.MaxLength ? (int)expected : 0;
        var times = ImmutableArray.CreateBuilder<double>(capacity);
        var stages = ImmutableArray.CreateBuilder<int>(capacity);
        var scale = new DecimalStep(step);
        times.Add(0);
        stages.Add(0);
        for (int i = 0; i < Scenario.Stages.Length; i++)
        {
            double t0 = StageStarts[i], t1 = StageEnd(i);
            long k = (long)Math.Floor(t0 / step);
            while (!IsAfter(scale.Times(k), t0)) k++;
            for (double t; IsAfter(t1, t = scale.Times(k)); k++)
            {
                times.Add(t);
                stages.Add(i);
            }
            times.Add(t1);
            stages.Add(i);
        }
        return new TimeGrid(times.DrainToImmutable(), stages.DrainToImmutable(), step);
    }

    /// <summary>
    /// k·step as the double nearest the exact decimal product of k and the step as written (the step's shortest
    /// decimal, up to 15 digits): 3 × 1e-5 is 3e-5, where the binary product is 3.0000000000000004e-5, so tables print
    /// the times a user would write. Decimal arithmetic is exact here (k &lt; 2⁶³, 15 digits); while k·m &lt; 2⁵³ (m the
    /// step's digits) a single division gives the same double.
    /// </summary>
    public static double GridTime(long k, double step) => new DecimalStep(step).Times(k);

    /// <summary>A step as the decimal it is written as, m·10⁻ˢ, for <see cref="GridTime"/> at many k.</summary>
    private readonly struct DecimalStep
    {
        // Integers below 2⁵³ and 10ˢ for s ≤ 22 are exact doubles, so one division gives the double nearest k·m·10⁻ˢ,
        // correctly rounded (IEEE 754 division), where the decimal product and its conversion cost ~20 ns. A mantissa of 0
        // (a step with more digits, or beyond double's exact powers of ten) leaves every k to the decimal product.
        private const long Exact = 1L << 53;
        private static readonly double[] Powers = [.. Enumerable.Range(0, 23).Select(e => Math.Pow(10, e))];
        private readonly double _step;
        private readonly decimal _decimal;
        private readonly long _mantissa;
        private readonly int _scale;

        public DecimalStep(double step)
        {
            _step = step;
            // Beyond decimal's range or resolution (|t| > 7.9e28 s or step < 1e-28 s) the binary product is all there is.
            if (!(step >= 1e-25 && step < 1e25)) return;
            _decimal = (decimal)step;
            Span<int> bits = stackalloc int[4];
            decimal.GetBits(_decimal, bits);
            int scale = (bits[3] >> 16) & 0xFF;
            long mantissa = (uint)bits[0] | (long)(uint)bits[1] << 32;
            if (bits[2] == 0 && mantissa is > 0 and < Exact && scale < Powers.Length) (_mantissa, _scale) = (mantissa, scale);
        }

        /// <summary>k·step, as <see cref="GridTime"/> defines it.</summary>
        public double Times(long k)
        {
            double product = k * _step;
            if (!(Math.Abs(product) < 1e25) || !(_step >= 1e-25)) return product;
            if (_mantissa > 0 && k >= 0 && k < Exact / _mantissa) return k * _mantissa / Powers[_scale];
            return (double)(k * _decimal);
        }
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
                $"stage '{Stages[stage].Name}' has no steady state: it grows at {s.GrowthRate:G4} s⁻¹ (max Re λ of the drift)");
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

    /// <summary>hi + lo += step, with the rounding of the sum kept in lo (Knuth's TwoSum, D. E. Knuth, TAOCP vol. 2, sec. 4.2.2).</summary>
    private static void Advance(ref double hi, ref double lo, double step)
    {
        double s = hi + step, b = s - hi;
        double e = (hi - (s - b)) + (step - b);
        (hi, lo) = (s, lo + e);
    }

    private static void Load(GaussianState state, double[] v, double[] mean)
    {
        int n = mean.Length;
        for (int i = 0; i < n; i++)
        {
            mean[i] = state.Mean[i];
            for (int j = 0; j < n; j++) v[i * n + j] = state.Covariance[i, j];
        }
    }

    /// <summary>Exact discretisations per (stage, gap) for one walk; gaps equal up to the rounding of the times share one.</summary>
    private sealed class StepCache(Dynamics owner)
    {
        // Per stage: the gaps discretised so far, ordered, and the last one used (evenly spaced times hit it every time);
        // a lookup is O(log n), so a walk through many distinct gaps (a data file of 10⁵ delays) stays O(n log n).
        private readonly Dictionary<int, SortedSet<(double Gap, int Id)>> _byStage = [];
        private readonly Dictionary<int, (double Gap, int Id)> _last = [];

        public List<Discretization> Steps { get; } = [];

        public int Find(int stage, double gap, double time, out double used)
        {
            // A relaxing bath makes every step depend on when it starts: nothing to share.
            if (owner.Transients[stage].Length > 0)
            {
                Steps.Add(owner.Step(stage, time - gap, gap));
                used = gap;
                return Steps.Count - 1;
            }
            double tolerance = GapRounding * Math.Abs(time);
            if (_last.TryGetValue(stage, out var last) && Math.Abs(last.Gap - gap) <= tolerance)
            {
                used = last.Gap;
                return last.Id;
            }
            if (!_byStage.TryGetValue(stage, out var known)) _byStage[stage] = known = [];
            foreach (var hit in known.GetViewBetween((gap - tolerance, int.MinValue), (gap + tolerance, int.MaxValue)))
            {
                _last[stage] = hit;
                used = hit.Gap;
                return hit.Id;
            }
            var model = owner.Models[stage];
            Steps.Add(VanLoan.Discretize(model.Drift, model.Diffusion, gap));
            known.Add(_last[stage] = (gap, Steps.Count - 1));
            used = gap;
            return Steps.Count - 1;
        }
    }
}

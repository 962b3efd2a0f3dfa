using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Optimization;
using System.Collections.Concurrent;
using Decohere.Core;

namespace Decohere.Statistics;

/// <summary>Settings of the maximum-likelihood driver (a light settings object; the problem is the objective).</summary>
public sealed record MaximumLikelihoodSettings
{
    /// <summary>
    /// Most optimiser starts (the given start and deterministic spreads around it, a factor 3 apart). They run in pairs, and
    /// the later pairs are skipped once every start so far has ended at the same optimum.
    /// </summary>
    public int Starts { get; init; } = 4;

    /// <summary>Confidence of the profile-likelihood intervals.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>Whether to compute profile-likelihood intervals at all.</summary>
    public bool Profiles { get; init; } = true;

    /// <summary>Indices of the parameters to profile; null profiles every parameter.</summary>
    public IReadOnlyCollection<int>? ProfileOnly { get; init; }

    /// <summary>Run starts and profile sides in parallel.</summary>
    public bool Parallel { get; init; } = true;

    /// <summary>Stops the fit: checked at every objective evaluation (starts, simplex, Newton polish, profiles).</summary>
    public CancellationToken Cancel { get; init; }

    /// <summary>How far (in ln x for a log parameter) a profile is followed before the data are declared not to bound it.</summary>
    public double ProfileRange { get; init; } = 14;
}

/// <summary>A profile-likelihood interval; an end that the profile never reached is the domain's bound (0 or ±∞) and flagged.</summary>
public sealed record ProfileInterval(double Low, double High, bool LowReached, bool HighReached);

/// <summary>The outcome of a maximum-likelihood fit: estimates, observed-information covariance, profile intervals, work and warnings.</summary>
public sealed class MaximumLikelihoodResult
{
    internal MaximumLikelihoodResult(IReadOnlyList<FitParameter> parameters, double[] estimate, double minimum,
        Matrix<double>? internalCovariance, ProfileInterval?[] intervals, int evaluations, IReadOnlyList<string> warnings, double threshold)
    {
        Parameters = parameters;
        Internal = estimate;
        Estimates = [.. estimate.Select((u, i) => parameters[i].ToNatural(u))];
        Minimum = minimum;
        InternalCovariance = internalCovariance;
        int p = parameters.Count;
        StandardErrors = new double[p];
        Correlation = Matrix<double>.Build.Dense(p, p, double.NaN);
        for (int i = 0; i < p; i++)
        {
            StandardErrors[i] = internalCovariance is null || internalCovariance[i, i] < 0
                ? double.NaN
                : parameters[i].Derivative(estimate[i]) * Math.Sqrt(internalCovariance[i, i]);
            for (int j = 0; j < p && internalCovariance is not null; j++)
                Correlation[i, j] = internalCovariance[i, j] / Math.Sqrt(internalCovariance[i, i] * internalCovariance[j, j]);
        }
        Intervals = intervals;
        Evaluations = evaluations;
        Warnings = warnings;
        ProfileThreshold = threshold;
    }

    /// <summary>The parameters, in order.</summary>
    public IReadOnlyList<FitParameter> Parameters { get; }

    /// <summary>Maximum-likelihood estimates (natural units).</summary>
    public double[] Estimates { get; }

    /// <summary>The estimates in optimiser coordinates (ln x for log parameters).</summary>
    public double[] Internal { get; }

    /// <summary>Minimum of the objective (−2 ln L up to a constant, or the deviance).</summary>
    public double Minimum { get; }

    /// <summary>Inverse observed information in optimiser coordinates, 2·H⁻¹ of the objective −2 ln L; null when H is not positive definite.</summary>
    public Matrix<double>? InternalCovariance { get; }

    /// <summary>Standard errors in natural units (delta method through the transform); NaN when unavailable.</summary>
    public double[] StandardErrors { get; }

    /// <summary>Correlation matrix (the same in natural and log coordinates, the transform being diagonal).</summary>
    public Matrix<double> Correlation { get; }

    /// <summary>Profile-likelihood intervals (natural units), null for a parameter not profiled.</summary>
    public ProfileInterval?[] Intervals { get; }

    /// <summary>Objective evaluations spent.</summary>
    public int Evaluations { get; }

    /// <summary>Problems noticed: no positive-definite information, a boundary estimate, an unbounded profile.</summary>
    public IReadOnlyList<string> Warnings { get; }

    /// <summary>The rise of the objective that bounds the interval: the χ²₁ quantile at the confidence (3.84 at 95%).</summary>
    public double ProfileThreshold { get; }
}

/// <summary>
/// Maximum-likelihood driver over an objective −2 ln L(x): Nelder–Mead simplex from several starts (J. A. Nelder,
/// R. Mead, Comput. J. 7, 308 (1965); MathNet implementation), a finite-difference Newton polish, the observed
/// information from a central-difference Hessian, and profile-likelihood intervals where −2 ln L rises by the χ²₁
/// quantile (D. J. Venzon, S. H. Moolgavkar, Appl. Stat. 37, 87 (1988)).
/// </summary>
public static class MaximumLikelihood
{
    private const double Invalid = 1e300;

    // The starts' loose optima: the simplex's values within 1e-6 of each other (relative), about 1e-4 in −2 ln L.
    private const double LooseTolerance = 1e-6;

    // A profile point's inner optimum: 1e-8 of −2 ln L moves r = √(P − P̂) by ~1e-6, a thousandth of the tolerance on r
    // with which each end of an interval is found.
    private const double ProfileTolerance = 1e-8;

    // Starts are run this many at a time (not one per core, so that which run does not depend on the machine).
    private const int StartPair = 2;

    // The simplex that refines a loose optimum, relative to the starts' (whose spread is about the square root of the tolerance).
    private const double RefineStep = 1e-2;

    // Loose optima within this rise of −2 ln L of the best may hide a deeper minimum (far below the χ²₁ quantile of any interval) ...
    private const double SameDepth = 0.01;

    // ... unless they lie within this distance (optimiser coordinates, ln x for a log parameter) of it: the same basin.
    private const double SamePoint = 1e-3;

    /// <summary>
    /// Minimises <paramref name="minus2LogL"/> (natural parameter values in, −2 ln L up to a constant out; +∞ or an
    /// exception for an impossible point) over the parameters.
    /// </summary>
    public static MaximumLikelihoodResult Fit(Func<double[], double> minus2LogL, IReadOnlyList<FitParameter> parameters,
        MaximumLikelihoodSettings? settings = null)
    {
        settings ??= new MaximumLikelihoodSettings();
        if (parameters.Count == 0) throw new ArgumentException("at least one parameter is needed", nameof(parameters));
        foreach (var p in parameters)
            if (!double.IsFinite(p.Start) || (p.IsLogarithmic && p.Start <= 0))
                throw new InputException($"{p.Name}: start value {p.Start} must be finite{(p.IsLogarithmic ? " and > 0" : "")}");
        var problem = new Problem(minus2LogL, parameters, settings.Cancel);
        return problem.Run(settings);
    }

    private sealed class Problem(Func<double[], double> objective, IReadOnlyList<FitParameter> parameters, CancellationToken cancel)
    {
        private int _evaluations;
        private readonly int _p = parameters.Count;
        private readonly ConcurrentQueue<string> _warnings = new();
        private bool _restarted;
        private readonly double[] _start = [.. parameters.Select(p => p.ToInternal(p.Start))];

        /// <summary>Objective in optimiser coordinates.</summary>
        public double F(double[] u)
        {
            cancel.ThrowIfCancellationRequested();
            Interlocked.Increment(ref _evaluations);
            var x = new double[_p];
            for (int i = 0; i < _p; i++) x[i] = parameters[i].ToNatural(u[i]);
            try
            {
                double f = objective(x);
                return double.IsFinite(f) ? f : Invalid;
            }
            catch (Exception e) when (e is InputException or ArithmeticException or Numerics.UnstableDynamicsException)
            {
                return Invalid;
            }
        }

        public MaximumLikelihoodResult Run(MaximumLikelihoodSettings settings)
        {
            var u0 = parameters.Select(p => p.ToInternal(p.Start)).ToArray();
            var starts = Starts(u0, Math.Max(1, settings.Starts));
            var all = Enumerable.Range(0, _p).ToArray();
            var scale = parameters.Select(p => p.IsLogarithmic ? 0.5 : 0.1 * Math.Max(Math.Abs(p.Start), 1e-3)).ToArray();
            // Starts run in pairs, each to a loose optimum (enough to tell basins apart); once every start so far has ended
            // in one basin the rest are skipped. Only the best, and any start that ended in another basin about as deep,
            // is then converged tightly.
            var found = new List<(double[] U, double F)>();
            for (int first = 0; first < starts.Count; first += StartPair)
            {
                var pair = new (double[] U, double F)[Math.Min(StartPair, starts.Count - first)];
                void One(int s) => pair[s] = Minimise(starts[first + s], all, scale, LooseTolerance);
                if (settings.Parallel) System.Threading.Tasks.Parallel.For(0, pair.Length, new ParallelOptions { CancellationToken = cancel }, One);
                else for (int s = 0; s < pair.Length; s++) One(s);
                found.AddRange(pair);
                var lowest = found.MinBy(r => r.F);
                if (lowest.F < Invalid && found.All(r => r.F <= lowest.F + SameDepth && Distance(r.U, lowest.U) <= SamePoint)) break;
            }
            var loose = found.MinBy(r => r.F);
            if (loose.F >= Invalid)
                throw new InputException("the likelihood is not finite at any start: check the data and the starting values of the free parameters");
            var deep = found.Where(r => r.F <= loose.F + SameDepth && (r == loose || Distance(r.U, loose.U) > SamePoint)).ToArray();
            // Newton steps from a loose optimum usually converge in two or three; a simplex refines those where they do not.
            var refined = new (double[] U, double F)[deep.Length];
            var fine = scale.Select(x => x * RefineStep).ToArray();
            void Refine(int s)
            {
                refined[s] = NewtonPolish(deep[s].U, deep[s].F, all, out bool converged);
                if (converged) return;
                var (u, f) = Minimise(refined[s].U, all, fine);
                refined[s] = NewtonPolish(u, f, all, out _);
            }
            if (settings.Parallel) System.Threading.Tasks.Parallel.For(0, deep.Length, new ParallelOptions { CancellationToken = cancel }, Refine);
            else for (int s = 0; s < deep.Length; s++) Refine(s);
            var best = refined.MinBy(r => r.F);

            var hessian = Hessian(best.U, best.F, all, out _);
            Matrix<double>? covariance = null;
            var chol = hessian.Evd(Symmetricity.Symmetric);
            if (chol.EigenValues.All(e => e.Real > 0))
                covariance = 2 * hessian.Inverse();
            else
                _warnings.Enqueue("the observed information is not positive definite at the optimum: standard errors are unavailable; at least one parameter (or combination) is not determined by the data");

            for (int i = 0; i < _p; i++)
                if (parameters[i].Domain == ParameterDomain.NonNegative && best.U[i] < u0[i] - 0.8 * settings.ProfileRange)
                    _warnings.Enqueue($"{parameters[i].Name} is at its lower bound 0: the data prefer no contribution from it");

            double threshold = ChiSquared.InvCDF(1, settings.Confidence);
            var intervals = new ProfileInterval?[_p];
            if (settings.Profiles)
            {
                var which = (settings.ProfileOnly ?? all).Distinct().ToArray();
                var sides = which.SelectMany(k => new[] { (k, -1), (k, +1) }).ToArray();
                var ends = new (double Value, bool Reached, double Better, double[]? BetterU)[sides.Length];
                void Side(int i) => ends[i] = ProfileEnd(sides[i].Item1, sides[i].Item2, best.U, best.F, covariance, threshold, settings.ProfileRange);
                if (settings.Parallel) System.Threading.Tasks.Parallel.For(0, sides.Length, new ParallelOptions { CancellationToken = cancel }, Side);
                else for (int i = 0; i < sides.Length; i++) Side(i);
                var improved = ends.Where(e => e.BetterU is not null).OrderBy(e => e.Better).FirstOrDefault();
                if (!_restarted && improved.BetterU is not null && improved.Better < best.F - 1e-3)
                {
                    // The profile walked into a higher likelihood than the optimiser found: restart from there once.
                    var moved = parameters.Select((p, i) => p with { Start = p.ToNatural(improved.BetterU[i]) }).ToArray();
                    if (moved.All(p => double.IsFinite(p.Start) && (!p.IsLogarithmic || p.Start > 0)))
                        return new Problem(objective, moved, cancel) { _restarted = true }.Run(settings with { Starts = 1 });
                }
                for (int i = 0; i < which.Length; i++)
                {
                    int k = which[i];
                    var lo = ends[2 * i];
                    var hi = ends[2 * i + 1];
                    intervals[k] = new ProfileInterval(lo.Value, hi.Value, lo.Reached, hi.Reached);
                    if (!lo.Reached && parameters[k].Domain == ParameterDomain.Real || !hi.Reached)
                        _warnings.Enqueue($"the profile likelihood of {parameters[k].Name} is flat towards {(hi.Reached ? "low" : "high")} values: the data do not bound it there at {settings.Confidence:P0} confidence");
                    else if (!lo.Reached && parameters[k].Domain == ParameterDomain.Positive)
                        _warnings.Enqueue($"the profile likelihood of {parameters[k].Name} is flat towards 0: the data give only an upper bound");
                }
            }
            return new MaximumLikelihoodResult(parameters, best.U, best.F, covariance, intervals, _evaluations, [.. _warnings.Distinct()], threshold);
        }

        private static double Distance(double[] a, double[] b) => a.Zip(b).Max(d => Math.Abs(d.First - d.Second));

        private List<double[]> Starts(double[] u0, int count)
        {
            var list = new List<double[]> { u0 };
            double spread = Math.Log(3);
            for (int s = 1; s < count; s++)
            {
                var u = (double[])u0.Clone();
                for (int i = 0; i < _p; i++)
                {
                    // Deterministic sign patterns: all up, all down, then alternating.
                    int sign = s switch { 1 => 1, 2 => -1, _ => ((i + s) % 2 == 0) ? 1 : -1 };
                    double step = parameters[i].IsLogarithmic ? spread : 0.5 * Math.Max(Math.Abs(u0[i]), 1e-3);
                    u[i] += sign * step * (1 + (s - 1) / 3);
                }
                list.Add(u);
            }
            return list;
        }

        /// <summary>Nelder–Mead over the coordinates in <paramref name="free"/>, the others held at <paramref name="start"/>; restarted at its own optimum until it stops improving.</summary>
        public (double[] U, double F) Minimise(double[] start, int[] free, double[] perturbation, double tolerance = 1e-12, int rounds = 6)
        {
            var u = (double[])start.Clone();
            double fu = F(u);
            if (free.Length == 0) return (u, fu);
            double[] Expand(Vector<double> v)
            {
                var full = (double[])u.Clone();
                for (int i = 0; i < free.Length; i++) full[free[i]] = v[i];
                return full;
            }
            var objectiveFunction = ObjectiveFunction.Value(v => F(Expand(v)));
            var step = Vector<double>.Build.DenseOfEnumerable(free.Select(i => perturbation[i]));
            for (int round = 0; round < rounds; round++)
            {
                var guess = Vector<double>.Build.DenseOfEnumerable(free.Select(i => u[i]));
                try
                {
                    var result = new NelderMeadSimplex(tolerance, 4000).FindMinimum(objectiveFunction, guess, step);
                    double f = result.FunctionInfoAtMinimum.Value;
                    var candidate = Expand(result.MinimizingPoint);
                    bool better = f < fu;
                    double gain = fu - f;
                    if (better) { u = candidate; fu = f; }
                    if (!better || gain < 1000 * tolerance * Math.Max(1, Math.Abs(f))) break;
                }
                catch (MaximumIterationsException)
                {
                    break;
                }
                step *= 0.3;
            }
            return (u, fu);
        }

        /// <summary>
        /// Finite-difference Newton steps with backtracking (J. Nocedal, S. J. Wright, Numerical Optimization, 2nd ed., Springer
        /// 2006, sec. 3.1, 8.1). <paramref name="converged"/> when a step no longer lowers −2 ln L by more than 1e-9: the
        /// differenced gradient's truncation error then dominates what the quadratic model still predicts.
        /// </summary>
        private (double[] U, double F) NewtonPolish(double[] u, double f, int[] free, out bool converged)
        {
            converged = false;
            for (int iteration = 0; iteration < 6; iteration++)
            {
                var h = Hessian(u, f, free, out var gradient, refine: iteration == 0 ? 1 : 0);
                Vector<double> delta;
                try
                {
                    if (!h.Evd(Symmetricity.Symmetric).EigenValues.All(e => e.Real > 0)) break;
                    delta = -h.Solve(gradient);
                }
                catch (ArgumentException) { break; }
                double predicted = -0.5 * gradient.DotProduct(delta);
                if (!(predicted > 1e-12)) { converged = true; break; }
                bool moved = false;
                for (double a = 1; a > 1e-3; a *= 0.5)
                {
                    var trial = (double[])u.Clone();
                    for (int i = 0; i < free.Length; i++) trial[free[i]] += a * delta[i];
                    double ft = F(trial);
                    if (ft < f)
                    {
                        converged = f - ft < 1e-9 || predicted < 1e-10;
                        (u, f, moved) = (trial, ft, true);
                        break;
                    }
                }
                if (!moved || converged) break;
            }
            return (u, f);
        }

        /// <summary>
        /// Central-difference Hessian (and gradient) of the objective over the free coordinates. A first pass along the
        /// coordinate axes is refined by differences along its own principal axes, each step about 0.1σ of that axis:
        /// in these whitened directions the cross terms are small, so a narrow, strongly correlated valley (|ρ| → 1,
        /// where the axis-aligned determinant loses its digits) is still measured accurately
        /// (P. E. Gill, W. Murray, M. H. Wright, Practical Optimization, Academic Press 1981, sec. 8.6).
        /// </summary>
        public Matrix<double> Hessian(double[] u, double f0, int[] free, out Vector<double> gradient, int refine = 2)
        {
            int n = free.Length;
            var directions = Matrix<double>.Build.Dense(n, n);
            for (int i = 0; i < n; i++) directions[i, i] = parameters[free[i]].IsLogarithmic ? 1e-3 : 1e-4 * Math.Max(1, Math.Abs(u[free[i]]));
            // Resize the axis steps from the diagonal curvature first.
            for (int i = 0; i < n; i++)
            {
                double h = directions[i, i];
                double c = (Along(u, free, directions, i, 1, -1, 0) - 2 * f0 + Along(u, free, directions, i, -1, -1, 0)) / (h * h);
                if (c > 0 && double.IsFinite(c)) directions[i, i] = Math.Clamp(0.3 * Math.Sqrt(2 / c), 1e-9, 0.5);
            }
            var hess = Directional(u, f0, free, directions, out gradient);
            for (int round = 0; round < refine; round++)
            {
                var evd = hess.Evd(Symmetricity.Symmetric);
                if (!evd.EigenValues.All(e => e.Real > 0 && double.IsFinite(e.Real))) break;
                var next = Matrix<double>.Build.Dense(n, n);
                for (int k = 0; k < n; k++)
                {
                    double step = Math.Clamp(0.1 * Math.Sqrt(2 / evd.EigenValues[k].Real), 1e-9, 0.5);
                    next.SetColumn(k, evd.EigenVectors.Column(k) * step);
                }
                directions = next;
                hess = Directional(u, f0, free, directions, out gradient);
            }
            return hess;
        }

        /// <summary>Second differences along the columns d_k of <paramref name="directions"/>, mapped back: H = D⁻ᵀ G D⁻¹, g = D⁻ᵀ g_D.</summary>
        private Matrix<double> Directional(double[] u, double f0, int[] free, Matrix<double> directions, out Vector<double> gradient)
        {
            int n = free.Length;
            var g = Matrix<double>.Build.Dense(n, n);
            var gd = Vector<double>.Build.Dense(n);
            for (int k = 0; k < n; k++)
            {
                double fp = Along(u, free, directions, k, 1, -1, 0), fm = Along(u, free, directions, k, -1, -1, 0);
                g[k, k] = fp - 2 * f0 + fm;
                gd[k] = (fp - fm) / 2;
            }
            for (int k = 0; k < n; k++)
                for (int l = k + 1; l < n; l++)
                {
                    double pp = Along(u, free, directions, k, 1, l, 1), pm = Along(u, free, directions, k, 1, l, -1);
                    double mp = Along(u, free, directions, k, -1, l, 1), mm = Along(u, free, directions, k, -1, l, -1);
                    g[k, l] = g[l, k] = (pp - pm - mp + mm) / 4;
                }
            var inverse = directions.Inverse();
            gradient = inverse.TransposeThisAndMultiply(gd);
            var h = inverse.TransposeThisAndMultiply(g) * inverse;
            return (h + h.Transpose()) * 0.5;
        }

        /// <summary>f(u + a·d_k + b·d_l) over the free coordinates (l &lt; 0 for a single direction).</summary>
        private double Along(double[] u, int[] free, Matrix<double> directions, int k, double a, int l, double b)
        {
            var v = (double[])u.Clone();
            for (int i = 0; i < free.Length; i++)
                v[free[i]] += a * directions[i, k] + (l >= 0 ? b * directions[i, l] : 0);
            return F(v);
        }

        /// <summary>
        /// Follows the profile of parameter k to one side until −2 ln L has risen by <paramref name="threshold"/>: the signed
        /// root r(t) = √(P(t) − P̂) is close to linear in t, so secant extrapolation brackets the end, and the Illinois
        /// variant of regula falsi (M. Dowell, P. Jarratt, BIT 11, 168 (1971)) refines it.
        /// </summary>
        private (double Value, bool Reached, double Better, double[]? BetterU) ProfileEnd(int k, int side, double[] uHat, double fHat,
            Matrix<double>? covariance, double threshold, double range)
        {
            var par = parameters[k];
            int[] others = [.. Enumerable.Range(0, _p).Where(i => i != k)];
            double z = Math.Sqrt(threshold);
            double se = covariance is not null && covariance[k, k] > 0 ? Math.Sqrt(covariance[k, k]) : double.NaN;
            double span = par.IsLogarithmic ? range : range * Math.Max(Math.Abs(uHat[k]), double.IsFinite(se) ? se : 1);
            var perturbation = new double[_p];
            var slope = new double[_p];
            for (int i = 0; i < _p; i++)
            {
                double cond = 0.1;
                if (covariance is not null && i != k)
                {
                    slope[i] = covariance[i, k] / covariance[k, k];
                    double v = covariance[i, i] - covariance[i, k] * covariance[i, k] / covariance[k, k];
                    cond = v > 0 ? Math.Sqrt(v) : 0.1;
                }
                perturbation[i] = Math.Clamp(cond, 1e-5, parameters[i].IsLogarithmic ? 0.5 : double.MaxValue);
            }
            double better = double.PositiveInfinity;
            double[]? betterU = null;
            var warm = (double[])uHat.Clone();
            double warmT = uHat[k];
            double R(double t, bool keep)
            {
                var start = (double[])warm.Clone();
                for (int i = 0; i < _p; i++) if (i != k) start[i] += slope[i] * (t - warmT);
                start[k] = t;
                var (u, f) = Minimise(start, others, perturbation, ProfileTolerance, 1);
                if (f < better) { better = f; betterU = u; }
                if (keep) { warm = u; warmT = t; }
                return Math.Sqrt(Math.Max(f - fHat, 0));
            }

            double tIn = uHat[k], rIn = 0;
            double step = double.IsFinite(se) ? z * se : (par.IsLogarithmic ? 0.5 : 0.1 * Math.Max(Math.Abs(uHat[k]), 1));
            double tOut = double.NaN, rOut = double.NaN;
            double t = uHat[k] + side * step;
            for (int i = 0; i < 40; i++)
            {
                double r = R(t, keep: true);
                if (r >= z) { tOut = t; rOut = r; break; }
                // Linear extrapolation of r through the last inside point, overshooting a little so the end gets bracketed.
                double next = r > 0.05 * z && r > rIn
                    ? tIn + (t - tIn) * Math.Clamp(1.15 * (z - rIn) / (r - rIn), 1.05, 8)
                    : t + 4 * (t - tIn);
                if (r > rIn) { tIn = t; rIn = r; }
                t = next;
                // Followed until past the range both from the optimum and from the start, so an optimum that ran far
                // along a flat ridge is still searched back towards the user's value.
                if (Math.Abs(t - uHat[k]) > span && Math.Abs(t - _start[k]) > span)
                {
                    // The data do not bound the parameter on this side within the range followed.
                    double bound = side < 0 ? (par.IsLogarithmic ? 0 : double.NegativeInfinity) : double.PositiveInfinity;
                    return (bound, false, better, betterU);
                }
            }
            if (double.IsNaN(tOut)) return (side < 0 ? (par.IsLogarithmic ? 0 : double.NegativeInfinity) : double.PositiveInfinity, false, better, betterU);

            // Illinois regula falsi on r(t) − z between the inside and outside points.
            double gIn = rIn - z, gOut = rOut - z;
            int lastSide = 0;
            for (int i = 0; i < 30 && Math.Abs(tOut - tIn) > 1e-7 * Math.Max(1, Math.Abs(tIn)); i++)
            {
                double tm = tOut - gOut * (tOut - tIn) / (gOut - gIn);
                double g = R(tm, keep: false) - z;
                if (Math.Abs(g) < 1e-3) { tOut = tm; break; }
                if (g > 0)
                {
                    tOut = tm; gOut = g;
                    if (lastSide == 1) gIn *= 0.5;
                    lastSide = 1;
                }
                else
                {
                    tIn = tm; gIn = g;
                    if (lastSide == -1) gOut *= 0.5;
                    lastSide = -1;
                }
            }
            return (par.ToNatural(tOut), true, better, betterU);
        }
    }
}

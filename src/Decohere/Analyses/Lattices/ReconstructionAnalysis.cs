using System.Collections.Immutable;
using System.Diagnostics;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Analyses.Lattices;

/// <summary>Settings of the reconstruction.</summary>
public sealed record ReconstructionSettings
{
    /// <summary>Fit an on-site term (cavity frequency offset) per site.</summary>
    public bool OnSite { get; init; } = true;

    /// <summary>Fit a next-nearest coupling for every pair of sites with a common neighbour (start 0 where the lattice has none).</summary>
    public bool NextNearest { get; init; }

    /// <summary>Two-sided confidence of the intervals.</summary>
    public double Confidence { get; init; } = 0.95;

    /// <summary>A direction of the Fisher matrix whose eigenvalue is below this fraction of the largest is called undetermined.</summary>
    public double NullTolerance { get; init; } = 1e-9;
}

/// <summary>What a term of the Hamiltonian is.</summary>
public enum TermKind { OnSite, Nearest, NextNearest }

/// <summary>
/// One fitted term of H = Σ t_i M_i (Hz), named "onsite[j]", "nearest[a-b]" or "next_nearest[a-b]", between sites
/// <c>SiteA</c> and <c>SiteB</c> (equal for on-site terms), with its standard error, the interval, and the scenario's value
/// the fit started from. <c>Identified</c> is false when the term lies in a direction the data do not determine (its
/// error and interval are then NaN, written as null).
/// </summary>
public sealed record FittedTerm(string Name, TermKind Kind, int SiteA, int SiteB, double ValueHz, double StdErrHz, double LowHz, double HighHz,
    double NominalHz, bool Identified);

/// <summary>The fitted coupling matrix.</summary>
public sealed record ReconstructionResult(
    Scenario Scenario,
    ImmutableArray<FittedTerm> Terms,
    double ChiSquare,
    int DegreesOfFreedom,
    double PValue,
    int Iterations,
    ImmutableArray<string> UndeterminedCombinations,
    Provenance Provenance,
    ResultStatus Status,
    ImmutableArray<string> Warnings,
    WorkStatistics Work) : IAnalysisResult;

/// <summary>
/// Fits the cavity network's Hamiltonian H = Σ_i t_i M_i on the lattice's graph (on-site offsets, nearest and optionally
/// next-nearest couplings) to measured eigenfrequencies and participations |ψ_k(j)|² (or their squares, as damping
/// measures them) by maximum likelihood (Gaussian errors: weighted least squares). The inverse eigenvalue problem in this parametrised form, H(t) = A₀ + Σ t_i A_i, and
/// its least-squares Newton-type solution follow M. T. Chu, G. H. Golub, Inverse Eigenvalue Problems, Oxford University
/// Press 2005, ch. 2–3 (recalled from memory). Derivatives are first-order perturbation theory (Hellmann–Feynman for the
/// eigenvalues; the sum over the other modes for the eigenvectors), so the modes must be non-degenerate. Participations
/// do not see the signs of the amplitudes, so a coupling's sign is a gauge choice on a tree: the fit starts from the
/// scenario's (the lattice's convention, positive hopping) and keeps it. Intervals are Wald intervals from the inverse
/// Fisher matrix; directions of the Fisher matrix with (near) zero eigenvalue are reported as undetermined combinations.
/// </summary>
public static class ReconstructionAnalysis
{
    /// <summary>Fits the coupling matrix to the data.</summary>
    /// <exception cref="InputException">The data do not fit the lattice (mode or site indices out of range, non-positive errors).</exception>
    public static ReconstructionResult Solve(Scenario scenario, SpectroscopyData data, ReconstructionSettings settings)
    {
        long start = Stopwatch.GetTimestamp();
        var lattice = ModesAnalysis.Require(scenario);
        int n = lattice.Count;
        Check(data, settings, n);
        var (fixedPart, _) = lattice.Hamiltonian(scenario);
        var terms = Terms(fixedPart, lattice, settings);
        // What is not fitted (on-site offsets with OnSite off, bonds outside the fitted graph) stays at the scenario's values.
        foreach (var x in terms) fixedPart[x.A, x.B] = fixedPart[x.B, x.A] = 0;
        int p = terms.Count;
        double[] t = terms.Select(x => x.Nominal).ToArray();
        int rows = data.Modes.Length + data.Participations.Length;
        if (rows <= p)
            throw new InputException($"the data have {rows} values for {p} terms; measure more participations or fit fewer terms (on-site terms off, no next-nearest)");
        var warnings = new List<string>();

        // Levenberg–Marquardt on χ²(t) (K. Levenberg, Q. Appl. Math. 2, 164 (1944); D. W. Marquardt, J. SIAM 11, 431 (1963)).
        var (residual, jacobian) = Evaluate(t, terms, fixedPart, data);
        double chi = residual.DotProduct(residual);
        double lambda = 1e-3;
        int iterations = 0;
        for (; iterations < 200; iterations++)
        {
            var jtj = jacobian.TransposeThisAndMultiply(jacobian);
            var g = jacobian.TransposeThisAndMultiply(residual);
            bool improved = false, settled = false;
            for (int attempt = 0; attempt < 30 && !improved; attempt++)
            {
                var damped = jtj.Clone();
                for (int i = 0; i < p; i++) damped[i, i] += lambda * Math.Max(jtj[i, i], 1e-30);
                var step = damped.Solve(g);
                var trial = t.Select((v, i) => v + step[i]).ToArray();
                var (r2, j2) = Evaluate(trial, terms, fixedPart, data);
                double chi2 = r2.DotProduct(r2);
                if (double.IsFinite(chi2) && chi2 <= chi)
                {
                    settled = chi - chi2 <= 1e-12 * Math.Max(chi, 1);
                    t = trial; residual = r2; jacobian = j2; chi = chi2; improved = true;
                    lambda = Math.Max(lambda / 10, 1e-15);
                }
                else lambda *= 10;
            }
            if (!improved || settled) break;
        }

        var fisher = jacobian.TransposeThisAndMultiply(jacobian);
        var evd = fisher.Evd(Symmetricity.Symmetric);
        double top = evd.EigenValues.Max(x => x.Real);
        var undetermined = new List<string>();
        var unidentified = new HashSet<int>();
        var covariance = Matrix<double>.Build.Dense(p, p);
        for (int e = 0; e < p; e++)
        {
            double value = evd.EigenValues[e].Real;
            var v = evd.EigenVectors.Column(e);
            if (value > settings.NullTolerance * top)
            {
                covariance += v.OuterProduct(v) / value;
                continue;
            }
            var parts = Enumerable.Range(0, p).Where(i => Math.Abs(v[i]) > 0.1).OrderByDescending(i => Math.Abs(v[i])).ToArray();
            foreach (int i in parts) unidentified.Add(i);
            undetermined.Add(string.Join(" ", parts.Select(i => $"{(v[i] >= 0 ? "+" : "−")}{Math.Abs(v[i]):F2}·{terms[i].Name}")).TrimStart('+'));
        }
        if (undetermined.Count > 0)
            warnings.Add($"the data do not determine {undetermined.Count} combination{(undetermined.Count == 1 ? "" : "s")} of terms (null space of the Fisher matrix): {string.Join("; ", undetermined)}; their terms have no interval");
        double z = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.5 + settings.Confidence / 2);
        var fitted = terms.Select((x, i) =>
        {
            double se = unidentified.Contains(i) ? double.NaN : Math.Sqrt(Math.Max(covariance[i, i], 0));
            return new FittedTerm(x.Name, x.Kind, x.A, x.B, t[i], se, t[i] - z * se, t[i] + z * se, x.Nominal, !unidentified.Contains(i));
        }).ToImmutableArray();
        int dof = rows - p + undetermined.Count;
        double pValue = dof > 0 ? 1 - MathNet.Numerics.Distributions.ChiSquared.CDF(dof, chi) : double.NaN;
        if (dof > 0 && pValue < 1e-3)
            warnings.Add($"χ² = {chi:G4} for {dof} degrees of freedom (p = {pValue:G3}): the graph, the errors or the assignment of modes do not describe the data");
        var modes = LatticeModes.Solve(Hamiltonian(t, terms, fixedPart), new double[n].Select(_ => 1.0).ToArray());
        double minGap = modes.Zip(modes.Skip(1), (a, b) => b.FrequencyHz - a.FrequencyHz).DefaultIfEmpty(double.PositiveInfinity).Min();
        double typicalError = data.Modes.Select(m => m.ErrorHz).DefaultIfEmpty(0).Average();
        if (minGap < 3 * typicalError)
            warnings.Add($"two fitted modes are {minGap:G3} Hz apart, within 3 frequency errors: their participations mix and the fit may have swapped them");
        var provenance = Provenance.For(scenario);
        return new ReconstructionResult(scenario, fitted, chi, dof, pValue, iterations, [.. undetermined], provenance,
            ResultStatuses.From(warnings), [.. warnings], WorkStatistics.Since(start, iterations));
    }

    private sealed record Term(string Name, TermKind Kind, int A, int B, double Nominal);

    // The terms of the fit on the lattice's graph, each starting from its value in the scenario's Hamiltonian h.
    private static List<Term> Terms(double[,] h, Lattice lattice, ReconstructionSettings settings)
    {
        int n = lattice.Count;
        var terms = new List<Term>();
        if (settings.OnSite)
            for (int j = 0; j < n; j++) terms.Add(new Term($"onsite[{j}]", TermKind.OnSite, j, j, h[j, j]));
        var nearest = lattice.Bonds.Where(b => b.Kind == BondKind.Nearest).Select(b => (Math.Min(b.A, b.B), Math.Max(b.A, b.B))).Distinct().ToList();
        foreach (var (a, b) in nearest) terms.Add(new Term($"nearest[{a}-{b}]", TermKind.Nearest, a, b, h[a, b]));
        var next = lattice.Bonds.Where(b => b.Kind == BondKind.NextNearest).Select(b => (Math.Min(b.A, b.B), Math.Max(b.A, b.B))).ToHashSet();
        if (settings.NextNearest)
        {
            var neighbours = Enumerable.Range(0, n).Select(_ => new HashSet<int>()).ToArray();
            foreach (var (a, b) in nearest) { neighbours[a].Add(b); neighbours[b].Add(a); }
            for (int a = 0; a < n; a++)
                for (int b = a + 1; b < n; b++)
                    if (!neighbours[a].Contains(b) && neighbours[a].Overlaps(neighbours[b])) next.Add((a, b));
        }
        foreach (var (a, b) in next.OrderBy(x => x.Item1).ThenBy(x => x.Item2)) terms.Add(new Term($"next_nearest[{a}-{b}]", TermKind.NextNearest, a, b, h[a, b]));
        return terms;
    }

    private static double[,] Hamiltonian(double[] t, IReadOnlyList<Term> terms, double[,] fixedPart)
    {
        var h = (double[,])fixedPart.Clone();
        for (int i = 0; i < terms.Count; i++)
        {
            var x = terms[i];
            h[x.A, x.B] += t[i];
            if (x.A != x.B) h[x.B, x.A] += t[i];
        }
        return h;
    }

    // Weighted residuals (data − model)/σ and their Jacobian with respect to the terms (sign: ∂model/∂t / σ, so the
    // Gauss–Newton step solves JᵀJ δ = Jᵀr). Eigenvalues: ∂λ_k/∂t_i = ψ_kᵀM_iψ_k; eigenvectors:
    // ∂ψ_k/∂t_i = Σ_{q≠k} ψ_q (ψ_qᵀM_iψ_k)/(λ_k − λ_q); ∂|ψ_k(j)|² = 2ψ_k(j)∂ψ_k(j).
    private static (Vector<double> Residual, Matrix<double> Jacobian) Evaluate(double[] t, IReadOnlyList<Term> terms, double[,] fixedPart, SpectroscopyData data)
    {
        int n = fixedPart.GetLength(0);
        var evd = Matrix<double>.Build.DenseOfArray(Hamiltonian(t, terms, fixedPart)).Evd(Symmetricity.Symmetric);
        var lambda = evd.EigenValues.Select(x => x.Real).ToArray();
        var psi = evd.EigenVectors;
        int p = terms.Count, rows = data.Modes.Length + data.Participations.Length;
        var residual = Vector<double>.Build.Dense(rows);
        var jacobian = Matrix<double>.Build.Dense(rows, p);
        double Coupling(int q, int k, Term x) => x.A == x.B ? psi[x.A, q] * psi[x.A, k] : psi[x.A, q] * psi[x.B, k] + psi[x.B, q] * psi[x.A, k];
        int row = 0;
        foreach (var m in data.Modes)
        {
            residual[row] = (m.FrequencyHz - lambda[m.ModeIndex]) / m.ErrorHz;
            for (int i = 0; i < p; i++) jacobian[row, i] = Coupling(m.ModeIndex, m.ModeIndex, terms[i]) / m.ErrorHz;
            row++;
        }
        var byMode = data.Participations.GroupBy(x => x.ModeIndex);
        var derivative = new double[n];
        foreach (var group in byMode)
        {
            int k = group.Key;
            var items = group.ToArray();
            int first = row;
            foreach (var x in items)
            {
                double w = psi[x.Site, k] * psi[x.Site, k];
                residual[row++] = (x.Value - (x.Squared ? w * w : w)) / x.Error;
            }
            for (int i = 0; i < p; i++)
            {
                Array.Clear(derivative);
                for (int q = 0; q < n; q++)
                {
                    if (q == k) continue;
                    double c = Coupling(q, k, terms[i]);
                    if (c == 0) continue;
                    double f = c / (lambda[k] - lambda[q]);
                    for (int j = 0; j < n; j++) derivative[j] += f * psi[j, q];
                }
                for (int r = 0; r < items.Length; r++)
                {
                    int j = items[r].Site;
                    double dw = 2 * psi[j, k] * derivative[j];
                    jacobian[first + r, i] = (items[r].Squared ? 2 * psi[j, k] * psi[j, k] * dw : dw) / items[r].Error;
                }
            }
        }
        return (residual, jacobian);
    }

    private static void Check(SpectroscopyData data, ReconstructionSettings settings, int n)
    {
        if (!(settings.Confidence > 0 && settings.Confidence < 1)) throw new InputException($"confidence must lie strictly between 0 and 1, got {settings.Confidence}");
        foreach (var m in data.Modes)
        {
            if (m.ModeIndex < 0 || m.ModeIndex >= n) throw new InputException($"mode_index {m.ModeIndex} is out of range: the lattice has modes 0 to {n - 1}");
            if (!(m.ErrorHz > 0)) throw new InputException($"mode {m.ModeIndex}: mode_frequency_err_hz must be positive, got {m.ErrorHz}");
        }
        if (data.Modes.Select(m => m.ModeIndex).Distinct().Count() != data.Modes.Length)
            throw new InputException("a mode_index has two different measured frequencies; give one per mode");
        foreach (var x in data.Participations)
        {
            if (x.ModeIndex < 0 || x.ModeIndex >= n) throw new InputException($"mode_index {x.ModeIndex} is out of range: the lattice has modes 0 to {n - 1}");
            if (x.Site < 0 || x.Site >= n) throw new InputException($"site {x.Site} is out of range: the lattice has sites 0 to {n - 1}");
            if (!(x.Error > 0)) throw new InputException($"mode {x.ModeIndex}, site {x.Site}: participation_err must be positive, got {x.Error}");
        }
    }
}

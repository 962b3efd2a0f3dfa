using MathNet.Numerics.Distributions;
using System.Collections.Immutable;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Analyses.Calibration;

/// <summary>One calibration measurement: a prepared occupancy and the sample variances of both quadratures from N shots.</summary>
public sealed record CalibrationPoint(double Occupancy, double VarI, double VarQ, long Shots, string Row);

/// <summary>The added-noise calibration: gain and added noise with intervals, their correlation and the goodness of fit.</summary>
public sealed record NoiseCalibrationResult(
    string Source,
    ImmutableArray<CalibrationPoint> Points,
    FittedQuantity Gain,
    FittedQuantity AddedNoise,
    FittedQuantity AddedNoiseInputReferred,
    double Correlation,
    GoodnessOfFit Goodness,
    ImmutableArray<string> Warnings,
    double Confidence);

/// <summary>
/// Added-noise calibration against known prepared occupancies n: each quadrature's measured variance is
/// σ² = g·(n + ½) + n_add, with g the gain (measured units per quantum) and n_add the additive noise in measured units
/// (the intercept at n + ½ = 0; n_add/g is the input-referred added noise in quanta). Fitted by maximum likelihood on the
/// exact χ² law of each sample variance, (N − 1)s²/σ² ~ χ²_{N−1} (NIST/SEMATECH e-Handbook of Statistical Methods,
/// sec. 7.2.3) — for a gamma response with identity link this is the weighted least squares that iterates the weights
/// (N − 1)/(2σ⁴) to convergence (P. McCullagh, J. A. Nelder, Generalized Linear Models, 2nd ed., 1989, sec. 2.5, 8.3).
/// </summary>
public static class NoiseCalibration
{
    /// <summary>Reads a calibration file: columns <c>occupancy, var_i, var_q, shots</c> (names mappable by <paramref name="options"/>).</summary>
    public static async Task<ImmutableArray<CalibrationPoint>> ReadAsync(string path, DataOptions? options = null, CancellationToken cancel = default) =>
        FromTable(await DataTable.LoadAsync(path, cancel), options ?? new DataOptions());

    /// <summary>Validates a loaded calibration table.</summary>
    /// <exception cref="InputException">A column is missing or a value is bad; the message names the row and column.</exception>
    public static ImmutableArray<CalibrationPoint> FromTable(DataTable table, DataOptions options)
    {
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        string[] need = ["occupancy", "var_i", "var_q", "shots"];
        var missing = need.Where(c => !table.Has(Col(c))).ToArray();
        if (missing.Length > 0)
            throw new InputException($"{table.Source}: missing column{(missing.Length == 1 ? "" : "s")} {string.Join(", ", missing.Select(c => DataTable.Describe(Col(c), c)))}; " +
                $"a calibration file has occupancy, var_i, var_q, shots; the file has {string.Join(", ", table.ColumnNames)}");
        var n = table.Numbers(Col("occupancy"), "occupancy");
        var vi = table.Numbers(Col("var_i"), "var_i");
        var vq = table.Numbers(Col("var_q"), "var_q");
        var shots = table.Numbers(Col("shots"), "shots");
        var points = ImmutableArray.CreateBuilder<CalibrationPoint>();
        for (int r = 0; r < table.RowCount; r++)
        {
            string where = $"{table.Source} {table.RowLabel(r)}, column ";
            if (n[r] < 0) throw new InputException($"{where}{DataTable.Describe(Col("occupancy"), "occupancy")}: occupancy {n[r]} is negative; a prepared occupancy is ≥ 0");
            foreach (var (name, v) in new[] { ("var_i", vi[r]), ("var_q", vq[r]) })
                if (!(v > 0)) throw new InputException($"{where}{DataTable.Describe(Col(name), name)}: {(v < 0 ? "negative variance" : "variance")} {v}; a variance must be > 0");
            if (shots[r] != Math.Floor(shots[r]) || shots[r] < 2)
                throw new InputException($"{where}{DataTable.Describe(Col("shots"), "shots")}: {shots[r]} shots; the shot count must be a whole number ≥ 2");
            points.Add(new CalibrationPoint(n[r], vi[r], vq[r], (long)shots[r], table.RowLabel(r)));
        }
        return points.ToImmutable();
    }

    /// <summary>Fits gain and added noise.</summary>
    /// <exception cref="InputException">Fewer than two distinct occupancies.</exception>
    public static NoiseCalibrationResult Fit(IReadOnlyList<CalibrationPoint> points, string source = "data", double confidence = 0.95, bool parallel = true)
    {
        if (points.Select(p => p.Occupancy).Distinct().Count() < 2)
            throw new InputException($"{source}: the calibration needs at least two different prepared occupancies to separate gain from added noise");
        // Start from ordinary least squares on the per-point mean variance.
        double[] xs = [.. points.Select(p => p.Occupancy + 0.5)];
        double[] ys = [.. points.Select(p => 0.5 * (p.VarI + p.VarQ))];
        double mx = xs.Average(), my = ys.Average();
        double slope = xs.Zip(ys).Sum(t => (t.First - mx) * (t.Second - my)) / xs.Sum(x => (x - mx) * (x - mx));
        double intercept = my - slope * mx;
        if (!(slope > 0)) slope = my / mx;
        if (!(intercept > 0)) intercept = 0.01 * my;
        double Deviance(double[] b)
        {
            double d = 0;
            foreach (var p in points)
            {
                double s2 = b[0] * (p.Occupancy + 0.5) + b[1];
                d += Statistics.Deviance.ChiSquare(p.Shots, p.VarI, s2) + Statistics.Deviance.ChiSquare(p.Shots, p.VarQ, s2);
            }
            return d;
        }
        var ml = MaximumLikelihood.Fit(Deviance,
            [new FitParameter("gain", slope, ParameterDomain.Positive), new FitParameter("added_noise", intercept, ParameterDomain.NonNegative)],
            new MaximumLikelihoodSettings { Confidence = confidence, Parallel = parallel, Starts = 2 });
        double z = Normal.InvCDF(0, 1, 0.5 + confidence / 2);
        FittedQuantity Of(int k, string name)
        {
            var iv = ml.Intervals[k]!;
            return new FittedQuantity(name, ml.Estimates[k], ml.StandardErrors[k], iv.Low, iv.High, iv.LowReached, iv.HighReached, "profile");
        }
        var gain = Of(0, "gain");
        var added = Of(1, "added_noise");
        // n_add/g by the delta method on ln(n_add) − ln(g).
        double ratio = ml.Estimates[1] / ml.Estimates[0];
        var cov = ml.InternalCovariance;
        double sdLog = cov is null ? double.NaN : Math.Sqrt(Math.Max(cov[0, 0] + cov[1, 1] - 2 * cov[0, 1], 0));
        var inputReferred = new FittedQuantity("added_noise_input_referred", ratio, ratio * sdLog, ratio * Math.Exp(-z * sdLog), ratio * Math.Exp(z * sdLog), true, true, "delta (log)");
        int dof = 2 * points.Count - 2;
        double pValue = dof > 0 ? 1 - ChiSquared.CDF(dof, ml.Minimum) : double.NaN;
        var warnings = new List<string>(ml.Warnings);
        if (dof > 0 && pValue < 1e-3)
            warnings.Add($"the linear model does not describe the calibration data well: deviance {ml.Minimum:G5} for {dof} degrees of freedom (p = {pValue:G2})");
        return new NoiseCalibrationResult(source, [.. points], gain, added, inputReferred, ml.Correlation[0, 1],
            new GoodnessOfFit(ml.Minimum, dof, dof > 0 ? ml.Minimum / dof : double.NaN, pValue), [.. warnings], confidence);
    }
}

using System.Collections.Immutable;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.IO;

/// <summary>
/// Reads a measured data file (CSV or Parquet) in one of the three <see cref="DataShape"/>s, detected from its columns,
/// and checks it against the scenario's readout, or a calibration file of variances at known occupancies: every bad
/// value is refused with its row and column. The readers produce plain data (<see cref="FitData"/>,
/// <see cref="CalibrationPoint"/>) that the analyses take; they know nothing of the analyses.
/// </summary>
public static class FitDataReader
{
    /// <summary>Reads and validates a data file for a fit of <paramref name="scenario"/>.</summary>
    /// <exception cref="InputException">The file is unreadable or a value is bad; the message names the row and column.</exception>
    public static async Task<FitData> ReadAsync(string path, Scenario scenario, DataOptions? options = null, CancellationToken cancel = default)
    {
        var table = await DataTable.LoadAsync(path, cancel);
        return FromTable(table, scenario, options ?? new DataOptions());
    }

    /// <summary>The columns each shape needs (besides optional ones), for detection and messages.</summary>
    public static readonly ImmutableDictionary<DataShape, ImmutableArray<string>> Required = new Dictionary<DataShape, ImmutableArray<string>>
    {
        [DataShape.Shots] = ["delay_s", "i", "q"],
        [DataShape.Variances] = ["delay_s", "var_i", "var_q", "shots"],
        [DataShape.Occupancies] = ["delay_s", "occupancy", "occupancy_err"],
    }.ToImmutableDictionary();

    /// <summary>Detects the shape of a table from its (mapped) columns.</summary>
    /// <exception cref="InputException">No shape, or more than one, fits the columns.</exception>
    public static DataShape DetectShape(DataTable table, DataOptions options)
    {
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        var fits = Required.Where(kv => kv.Value.All(c => table.Has(Col(c)))).Select(kv => kv.Key).OrderBy(s => s).ToArray();
        if (fits.Length == 1) return fits[0];
        string shapes = string.Join("; ", Required.OrderBy(kv => kv.Key).Select(kv => $"{kv.Key.ToString().ToLowerInvariant()}: {string.Join(", ", kv.Value)}"));
        string found = string.Join(", ", table.ColumnNames);
        if (fits.Length > 1)
            throw new InputException($"{table.Source}: the columns ({found}) fit more than one data shape ({string.Join(", ", fits)}); keep the columns of one shape ({shapes})");
        var closest = Required.OrderBy(kv => kv.Value.Count(c => !table.Has(Col(c)))).ThenBy(kv => kv.Key).First();
        var missing = closest.Value.Where(c => !table.Has(Col(c))).Select(c => Col(c) == c ? c : $"{Col(c)} (as {c})");
        throw new InputException($"{table.Source}: missing column{(missing.Count() == 1 ? "" : "s")} {string.Join(", ", missing)} for {closest.Key.ToString().ToLowerInvariant()} data; " +
            $"the file has {found}; expected the columns of one shape ({shapes}); map other names with a column mapping NAME=FILE_COLUMN");
    }

    /// <summary>Validates a loaded table against the scenario.</summary>
    public static FitData FromTable(DataTable table, Scenario scenario, DataOptions options)
    {
        var readout = scenario.Readout ?? throw new InputException($"scenario '{scenario.Name}' has no readout block: a fit needs readout.mode and readout.stage to know which mode and times the data measure");
        var shape = DetectShape(table, options);
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        string delayCol = Col("delay_s");
        var raw = table.Numbers(delayCol, "delay_s");
        var delays = raw.Select(d => d * options.DelayScale).ToArray();
        int stage = scenario.StageIndex(readout.Stage);
        double span = scenario.Stages.Skip(stage).Sum(s => s.DurationS);
        for (int r = 0; r < delays.Length; r++)
            if (delays[r] < 0 || delays[r] > span * (1 + 1e-9))
                throw new InputException($"{table.Source} {table.RowLabel(r)}, column {DataTable.Describe(delayCol, "delay_s")}: delay {Quantity.Format(delays[r], Dimension.Time)} is outside the scenario: " +
                    $"delays count from the start of stage '{readout.Stage}' and must lie in [0, {Quantity.Format(span, Dimension.Time)}]{(options.DelayScale == 1 ? " (in seconds; see the delay unit)" : "")}");
        var observations = shape switch
        {
            DataShape.Shots => Shots(table, options, readout, delays, Col),
            DataShape.Variances => Variances(table, delays, Col),
            _ => Occupancies(table, delays, Col),
        };
        return new FitData(shape, [.. observations.OrderBy(o => o.DelayS)], table.Source);
    }

    private static List<DelayObservation> Shots(DataTable table, DataOptions options, Readout readout, double[] delays, Func<string, string> col)
    {
        var i = table.Numbers(col("i"), "i");
        var q = table.Numbers(col("q"), "q");
        var keep = Enumerable.Range(0, table.RowCount);
        if (table.Has(col("mode")))
        {
            string mode = options.Mode ?? readout.Mode;
            var modes = table.Texts(col("mode"));
            var kept = keep.Where(r => modes[r] == mode).ToArray();
            if (kept.Length == 0)
                throw new InputException($"{table.Source}, column {DataTable.Describe(col("mode"), "mode")}: no shots of mode '{mode}'; modes in the file: {string.Join(", ", modes.Distinct().Take(10))}");
            keep = kept;
        }
        var order = keep.OrderBy(r => delays[r]).ThenBy(r => r).ToArray();
        var result = new List<DelayObservation>();
        for (int start = 0; start < order.Length;)
        {
            double d = delays[order[start]];
            int end = start + 1;
            // Delays written as text round-trip exactly; the tolerance only absorbs unit conversion.
            while (end < order.Length && Math.Abs(delays[order[end]] - d) <= 1e-9 * Math.Max(Math.Abs(d), 1e-12)) end++;
            int n = end - start;
            int first = order.Skip(start).Take(n).Min();
            if (n < 2)
                throw new InputException($"{table.Source} {table.RowLabel(first)}, column {DataTable.Describe(col("delay_s"), "delay_s")}: only one shot at delay {Quantity.Format(d, Dimension.Time)}; a variance needs at least two shots per delay");
            double mi = 0, mq = 0;
            for (int k = start; k < end; k++) { mi += i[order[k]]; mq += q[order[k]]; }
            mi /= n;
            mq /= n;
            double sii = 0, sqq = 0, siq = 0;
            for (int k = start; k < end; k++)
            {
                double a = i[order[k]] - mi, b = q[order[k]] - mq;
                sii += a * a; sqq += b * b; siq += a * b;
            }
            double vi = sii / (n - 1), vq = sqq / (n - 1), c = siq / (n - 1);
            if (n == 2)
                throw new InputException($"{table.Source} {table.RowLabel(first)}, column {DataTable.Describe(col("delay_s"), "delay_s")}: only two shots at delay {Quantity.Format(d, Dimension.Time)}; " +
                    "two (i, q) pairs always have a singular 2×2 sample covariance, so the joint likelihood needs at least three shots per delay");
            if (!(vi * vq - c * c > 1e-14 * vi * vq))
                throw new InputException($"{table.Source} {table.RowLabel(first)}, columns {col("i")}, {col("q")}: the {n} shots at delay {Quantity.Format(d, Dimension.Time)} have a singular (i, q) covariance (constant or perfectly correlated values)");
            result.Add(new DelayObservation(d, n, vi, vq, c, mi, mq, double.NaN, double.NaN, table.RowLabel(first)));
            start = end;
        }
        return result;
    }

    private static List<DelayObservation> Variances(DataTable table, double[] delays, Func<string, string> col)
    {
        var vi = table.Numbers(col("var_i"), "var_i");
        var vq = table.Numbers(col("var_q"), "var_q");
        var shots = table.Numbers(col("shots"), "shots");
        double[]? cov = table.Has(col("cov_iq")) ? table.Numbers(col("cov_iq"), "cov_iq") : null;
        var result = new List<DelayObservation>();
        for (int r = 0; r < table.RowCount; r++)
        {
            string where = $"{table.Source} {table.RowLabel(r)}, column ";
            foreach (var (name, v) in new[] { ("var_i", vi[r]), ("var_q", vq[r]) })
            {
                if (v < 0) throw new InputException($"{where}{DataTable.Describe(col(name), name)}: negative variance {v}; a variance must be > 0");
                if (v == 0) throw new InputException($"{where}{DataTable.Describe(col(name), name)}: variance 0; a variance must be > 0");
            }
            // The same range as readout.shots; a count like 1e300 overflowed the cast below and hung the fit.
            if (shots[r] != Math.Floor(shots[r]) || shots[r] < 2 || shots[r] > int.MaxValue)
                throw new InputException($"{where}{DataTable.Describe(col("shots"), "shots")}: {shots[r]} shots; the shot count must be a whole number ≥ 2 and ≤ {int.MaxValue} (a variance needs at least two shots per delay)");
            double? c = cov?[r];
            if (c is { } cv && !(vi[r] * vq[r] - cv * cv > 0))
                throw new InputException($"{where}{DataTable.Describe(col("cov_iq"), "cov_iq")}: cov_iq = {cv} needs |cov_iq| < √(var_i·var_q) = {Math.Sqrt(vi[r] * vq[r]):G6} for a positive-definite covariance");
            result.Add(new DelayObservation(delays[r], (long)shots[r], vi[r], vq[r], c, 0, 0, double.NaN, double.NaN, table.RowLabel(r)));
        }
        return result;
    }

    private static List<DelayObservation> Occupancies(DataTable table, double[] delays, Func<string, string> col)
    {
        var n = table.Numbers(col("occupancy"), "occupancy");
        var err = table.Numbers(col("occupancy_err"), "occupancy_err");
        var result = new List<DelayObservation>();
        for (int r = 0; r < table.RowCount; r++)
        {
            if (!(err[r] > 0))
                throw new InputException($"{table.Source} {table.RowLabel(r)}, column {DataTable.Describe(col("occupancy_err"), "occupancy_err")}: {err[r]}; the standard error must be > 0");
            result.Add(new DelayObservation(delays[r], 0, double.NaN, double.NaN, null, 0, 0, n[r], err[r], table.RowLabel(r)));
        }
        return result;
    }

    /// <summary>Reads a calibration file: columns <c>occupancy, var_i, var_q, shots</c> (names mappable by <paramref name="options"/>).</summary>
    public static async Task<ImmutableArray<CalibrationPoint>> ReadCalibrationAsync(string path, DataOptions? options = null, CancellationToken cancel = default) =>
        CalibrationFromTable(await DataTable.LoadAsync(path, cancel), options ?? new DataOptions());

    /// <summary>Validates a loaded calibration table.</summary>
    /// <exception cref="InputException">A column is missing or a value is bad; the message names the row and column.</exception>
    public static ImmutableArray<CalibrationPoint> CalibrationFromTable(DataTable table, DataOptions options)
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
}

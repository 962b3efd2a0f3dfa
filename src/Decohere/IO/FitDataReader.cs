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
    /// <summary>Reads and validates a data file for a fit of <paramref name="scenario"/>: only the columns of its shape are read.</summary>
    /// <exception cref="InputException">The file is unreadable, a value is bad (the message names the row and column), or
    /// its columns would take more than the memory limit of <see cref="DataOptions.Limits"/>.</exception>
    public static async Task<FitData> ReadAsync(string path, Scenario scenario, DataOptions? options = null, CancellationToken cancel = default)
    {
        options ??= new DataOptions();
        string file = Path.GetFileName(path);
        var table = await DataTable.LoadAsync(path, (names, rows) =>
        {
            var shape = DetectShape(names, file, options);
            string Col(string name) => options.Columns.GetValueOrDefault(name, name);
            var numbers = Required[shape].Concat(shape == DataShape.Variances && names.Contains(Col("cov_iq")) ? ["cov_iq"] : []).Select(Col).ToArray();
            string[] texts = shape == DataShape.Shots && names.Contains(Col("mode")) ? [Col("mode")] : [];
            // Shots are reduced to a few delays; variances and occupancies keep an observation per row.
            Estimate(file, rows, numbers.Length, texts.Length, shape == DataShape.Shots ? 0 : ObservationBytes).Enforce(options.Limits);
            return new ColumnSelection(numbers, texts);
        }, cancel);
        return FromTable(table, scenario, options, cancel);
    }

    /// <summary>Memory per observation row of variance or occupancy data (the row's record and its share of the fit's per-delay arrays).</summary>
    public const double ObservationBytes = 200;

    /// <summary>The memory reading a data file takes: 8 bytes a row per number column, 4 per text column, and per-row observations.</summary>
    public static ResourceEstimate Estimate(string file, long rows, int numberColumns, int textColumns, double observationBytes) =>
        new($"reading {file}", [new($"data ({rows} rows × {numberColumns + textColumns} columns used)", rows,
            rows * (8.0 * numberColumns + 4.0 * textColumns + observationBytes), 0)]);

    /// <summary>The columns each shape needs (besides optional ones), for detection and messages.</summary>
    public static readonly ImmutableDictionary<DataShape, ImmutableArray<string>> Required = new Dictionary<DataShape, ImmutableArray<string>>
    {
        [DataShape.Shots] = ["delay_s", "i", "q"],
        [DataShape.Variances] = ["delay_s", "var_i", "var_q", "shots"],
        [DataShape.Occupancies] = ["delay_s", "occupancy", "occupancy_err"],
    }.ToImmutableDictionary();

    /// <summary>Detects the shape of a table from its (mapped) columns.</summary>
    /// <exception cref="InputException">No shape, or more than one, fits the columns.</exception>
    public static DataShape DetectShape(DataTable table, DataOptions options) => DetectShape(table.ColumnNames, table.Source, options);

    /// <summary>Detects the shape of a file from its column names.</summary>
    /// <exception cref="InputException">No shape, or more than one, fits the columns.</exception>
    public static DataShape DetectShape(IReadOnlyList<string> columns, string source, DataOptions options)
    {
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        bool Has(string name) => columns.Contains(Col(name));
        var fits = Required.Where(kv => kv.Value.All(Has)).Select(kv => kv.Key).OrderBy(s => s).ToArray();
        if (fits.Length == 1) return fits[0];
        string shapes = string.Join("; ", Required.OrderBy(kv => kv.Key).Select(kv => $"{kv.Key.ToString().ToLowerInvariant()}: {string.Join(", ", kv.Value)}"));
        string found = string.Join(", ", columns);
        if (fits.Length > 1)
            throw new InputException($"{source}: the columns ({found}) fit more than one data shape ({string.Join(", ", fits)}); keep the columns of one shape ({shapes})");
        var closest = Required.OrderBy(kv => kv.Value.Count(c => !Has(c))).ThenBy(kv => kv.Key).First();
        var missing = closest.Value.Where(c => !Has(c)).Select(c => Col(c) == c ? c : $"{Col(c)} (as {c})");
        throw new InputException($"{source}: missing column{(missing.Count() == 1 ? "" : "s")} {string.Join(", ", missing)} for {closest.Key.ToString().ToLowerInvariant()} data; " +
            $"the file has {found}; expected the columns of one shape ({shapes}); map other names with a column mapping NAME=FILE_COLUMN");
    }

    /// <summary>Validates a loaded table against the scenario.</summary>
    public static FitData FromTable(DataTable table, Scenario scenario, DataOptions options, CancellationToken cancel = default)
    {
        var readout = scenario.Readout ?? throw new InputException($"scenario '{scenario.Name}' has no readout block: a fit needs readout.mode and readout.stage to know which mode and times the data measure");
        var shape = DetectShape(table, options);
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        string delayCol = Col("delay_s");
        var raw = table.Numbers(delayCol, "delay_s");
        double scale = options.DelayScale;
        int stage = scenario.StageIndex(readout.Stage);
        double span = scenario.Stages.Skip(stage).Sum(s => s.DurationS);
        for (int r = 0; r < raw.Length; r++)
        {
            double d = raw[r] * scale;
            if (d < 0 || d > span * (1 + 1e-9))
                throw new InputException($"{table.Source} {table.RowLabel(r)}, column {DataTable.Describe(delayCol, "delay_s")}: delay {Quantity.Format(d, Dimension.Time)} is outside the scenario: " +
                    $"delays count from the start of stage '{readout.Stage}' and must lie in [0, {Quantity.Format(span, Dimension.Time)}]{(scale == 1 ? " (in seconds; see the delay unit)" : "")}");
        }
        cancel.ThrowIfCancellationRequested();
        var observations = shape switch
        {
            DataShape.Shots => Shots(table, options, readout, raw, Col, cancel),
            DataShape.Variances => Variances(table, raw, scale, Col),
            _ => Occupancies(table, raw, scale, Col),
        };
        return new FitData(shape, [.. observations.OrderBy(o => o.DelayS)], table.Source);
    }

    // Per delay the sufficient statistics of its shots, in two passes over the rows (means, then centred sums) and
    // without sorting or copying the columns: rows are assigned to delay groups through their distinct delay values.
    private static List<DelayObservation> Shots(DataTable table, DataOptions options, Readout readout, double[] raw, Func<string, string> col, CancellationToken cancel)
    {
        var i = table.Numbers(col("i"), "i");
        var q = table.Numbers(col("q"), "q");
        double scale = options.DelayScale;
        int[]? modeCodes = null;
        int keepCode = -1;
        if (table.Has(col("mode")))
        {
            string mode = options.Mode ?? readout.Mode;
            var (codes, modes) = table.Categories(col("mode"));
            keepCode = modes.Select((m, k) => m == mode ? k : -1).FirstOrDefault(k => k >= 0, -1);
            if (keepCode < 0)
                throw new InputException($"{table.Source}, column {DataTable.Describe(col("mode"), "mode")}: no shots of mode '{mode}'; modes in the file: {string.Join(", ", modes.Take(10))}");
            modeCodes = codes;
        }
        bool Kept(int r) => modeCodes is null || modeCodes[r] == keepCode;

        // Distinct delay values, then groups of values within the tolerance of the group's smallest (delays written as text
        // round-trip exactly; the tolerance only absorbs unit conversion).
        var distinct = new Dictionary<double, int>();
        // Shots come in runs of one delay: a row with the delay of the row before skips the lookup.
        double lastDelay = double.NaN;
        int lastGroup = -1;
        int Group(double delay)
        {
            if (!(delay == lastDelay)) (lastDelay, lastGroup) = (delay, distinct[delay]);
            return lastGroup;
        }
        for (int r = 0; r < raw.Length; r++)
            if (Kept(r) && !(raw[r] == lastDelay)) distinct.TryAdd(lastDelay = raw[r], 0);
        lastDelay = double.NaN;
        var values = distinct.Keys.Order().ToArray();
        var groups = new List<(double Delay, long Count, int First, double SumI, double SumQ, double Sii, double Sqq, double Siq)>();
        foreach (double v in values)
        {
            double d = v * scale;
            if (groups.Count == 0 || !(Math.Abs(d - groups[^1].Delay) <= 1e-9 * Math.Max(Math.Abs(groups[^1].Delay), 1e-12)))
                groups.Add((d, 0, int.MaxValue, 0, 0, 0, 0, 0));
            distinct[v] = groups.Count - 1;
        }
        var g = groups.ToArray();
        for (int r = 0; r < raw.Length; r++)
        {
            if ((r & 0xFFFF) == 0) cancel.ThrowIfCancellationRequested();
            if (!Kept(r)) continue;
            ref var group = ref g[Group(raw[r])];
            group.Count++;
            group.SumI += i[r];
            group.SumQ += q[r];
            if (r < group.First) group.First = r;
        }
        for (int r = 0; r < raw.Length; r++)
        {
            if ((r & 0xFFFF) == 0) cancel.ThrowIfCancellationRequested();
            if (!Kept(r)) continue;
            ref var group = ref g[Group(raw[r])];
            double a = i[r] - group.SumI / group.Count, b = q[r] - group.SumQ / group.Count;
            group.Sii += a * a; group.Sqq += b * b; group.Siq += a * b;
        }
        var result = new List<DelayObservation>();
        foreach (var group in g)
        {
            long n = group.Count;
            double d = group.Delay;
            if (n < 2)
                throw new InputException($"{table.Source} {table.RowLabel(group.First)}, column {DataTable.Describe(col("delay_s"), "delay_s")}: only one shot at delay {Quantity.Format(d, Dimension.Time)}; a variance needs at least two shots per delay");
            double vi = group.Sii / (n - 1), vq = group.Sqq / (n - 1), c = group.Siq / (n - 1);
            if (n == 2)
                throw new InputException($"{table.Source} {table.RowLabel(group.First)}, column {DataTable.Describe(col("delay_s"), "delay_s")}: only two shots at delay {Quantity.Format(d, Dimension.Time)}; " +
                    "two (i, q) pairs always have a singular 2×2 sample covariance, so the joint likelihood needs at least three shots per delay");
            if (!(vi * vq - c * c > 1e-14 * vi * vq))
                throw new InputException($"{table.Source} {table.RowLabel(group.First)}, columns {col("i")}, {col("q")}: the {n} shots at delay {Quantity.Format(d, Dimension.Time)} have a singular (i, q) covariance (constant or perfectly correlated values)");
            result.Add(new DelayObservation(d, n, vi, vq, c, group.SumI / n, group.SumQ / n, double.NaN, double.NaN, table.RowLabel(group.First)));
        }
        return result;
    }

    private static List<DelayObservation> Variances(DataTable table, double[] delays, double scale, Func<string, string> col)
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
            result.Add(new DelayObservation(delays[r] * scale, (long)shots[r], vi[r], vq[r], c, 0, 0, double.NaN, double.NaN, table.RowLabel(r)));
        }
        return result;
    }

    private static List<DelayObservation> Occupancies(DataTable table, double[] delays, double scale, Func<string, string> col)
    {
        var n = table.Numbers(col("occupancy"), "occupancy");
        var err = table.Numbers(col("occupancy_err"), "occupancy_err");
        var result = new List<DelayObservation>();
        for (int r = 0; r < table.RowCount; r++)
        {
            if (!(err[r] > 0))
                throw new InputException($"{table.Source} {table.RowLabel(r)}, column {DataTable.Describe(col("occupancy_err"), "occupancy_err")}: {err[r]}; the standard error must be > 0");
            result.Add(new DelayObservation(delays[r] * scale, 0, double.NaN, double.NaN, null, 0, 0, n[r], err[r], table.RowLabel(r)));
        }
        return result;
    }

    /// <summary>Reads a calibration file: columns <c>occupancy, var_i, var_q, shots</c> (names mappable by <paramref name="options"/>).</summary>
    public static async Task<ImmutableArray<CalibrationPoint>> ReadCalibrationAsync(string path, DataOptions? options = null, CancellationToken cancel = default)
    {
        options ??= new DataOptions();
        string file = Path.GetFileName(path);
        var table = await DataTable.LoadAsync(path, (names, rows) =>
        {
            var used = CalibrationColumns.Select(c => options.Columns.GetValueOrDefault(c, c)).Where(names.Contains).ToArray();
            Estimate(file, rows, used.Length, 0, ObservationBytes).Enforce(options.Limits);
            return new ColumnSelection(used, []);
        }, cancel);
        return CalibrationFromTable(table, options);
    }

    private static readonly string[] CalibrationColumns = ["occupancy", "var_i", "var_q", "shots"];

    /// <summary>Validates a loaded calibration table.</summary>
    /// <exception cref="InputException">A column is missing or a value is bad; the message names the row and column.</exception>
    public static ImmutableArray<CalibrationPoint> CalibrationFromTable(DataTable table, DataOptions options)
    {
        string Col(string name) => options.Columns.GetValueOrDefault(name, name);
        var missing = CalibrationColumns.Where(c => !table.Has(Col(c))).ToArray();
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

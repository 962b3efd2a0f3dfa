using System.Diagnostics;
using System.Text;
using Decohere.Core;

namespace Decohere.Analyses.Sweeps;

/// <summary>One shard's table read back: where it came from, its footer metadata, its sweep description and its rows.</summary>
public sealed record SweepPart(string Path, IReadOnlyDictionary<string, string> Metadata, SweepDescription Description, IReadOnlyList<SweepRow> Rows);

/// <summary>
/// Joins the parts of a sharded sweep into the result an unsharded run gives. Every point must be present exactly once
/// and every part must describe the same sweep.
/// </summary>
public static class SweepMerge
{
    /// <summary>Checks and joins the parts (read from <paramref name="directory"/>, named in messages).</summary>
    /// <exception cref="InputException">No parts, parts of different sweeps, or points missing or repeated (the message names them).</exception>
    public static SweepResult Solve(IReadOnlyList<SweepPart> contents, string directory)
    {
        long started = Stopwatch.GetTimestamp();
        if (contents.Count == 0)
            throw new InputException($"merge: no part files (part-K-of-N.parquet, written by the shards of a sweep) in {directory}");
        var parts = contents.Select(c => c.Path).ToArray();
        string json = contents[0].Metadata[Sweep.MetadataKey];
        var different = contents.Where(c => c.Metadata[Sweep.MetadataKey] != json).Select(c => Path.GetFileName(c.Path)).ToArray();
        if (different.Length > 0)
            throw new InputException($"merge: {string.Join(", ", different)} belong{(different.Length == 1 ? "s" : "")} to a different sweep than {Path.GetFileName(parts[0])} (scenario, seed, grid or metrics differ)");
        var description = contents[0].Description;

        long total = description.Points;
        var count = new int[total];
        var rows = new SweepRow[total];
        var outside = new List<long>();
        foreach (var c in contents)
            foreach (var row in c.Rows)
            {
                if (row.Point < 0 || row.Point >= total) { outside.Add(row.Point); continue; }
                count[row.Point]++;
                rows[row.Point] = row;
            }
        var missing = Enumerable.Range(0, checked((int)total)).Where(p => count[p] == 0).Select(p => (long)p).ToList();
        var repeated = Enumerable.Range(0, checked((int)total)).Where(p => count[p] > 1).Select(p => (long)p).ToList();
        if (missing.Count > 0 || repeated.Count > 0 || outside.Count > 0)
        {
            var message = new StringBuilder($"merge: {directory}: the {parts.Length} part file{(parts.Length == 1 ? "" : "s")} do not hold each of the {total} points exactly once");
            if (missing.Count > 0)
            {
                message.Append($"; {missing.Count} missing: {Ranges(missing)}");
                var shards = MissingShards(contents, missing);
                if (shards.Length > 0) message.Append($" (run or rerun {string.Join(", ", shards.Select(s => $"shard {s}"))})");
            }
            if (repeated.Count > 0)
            {
                var holders = contents.Where(c => c.Rows.Any(r => r.Point >= 0 && r.Point < total && count[r.Point] > 1)).Select(c => Path.GetFileName(c.Path));
                message.Append($"; {repeated.Count} duplicated: {Ranges(repeated)} (in {string.Join(", ", holders)})");
            }
            if (outside.Count > 0) message.Append($"; {outside.Count} outside the grid: {Ranges(outside.Order().ToList())}");
            throw new InputException(message.ToString());
        }

        var (status, warnings) = SweepResult.Judge(rows);
        return new SweepResult(description, null, rows, 0, 0, Provenance.FromKeyValues(contents[0].Metadata), status, warnings,
            WorkStatistics.Since(started));
    }

    // When every part comes from one split into N shards, the missing points name the shards to run again.
    private static string[] MissingShards(IReadOnlyList<SweepPart> contents, List<long> missing)
    {
        var splits = contents.Select(c => c.Metadata.GetValueOrDefault(SweepShard.MetadataKey)).Distinct().ToArray();
        var counts = splits.Select(s => s is null ? -1 : SweepShard.Parse(s).Count).Distinct().ToArray();
        if (counts.Length != 1 || counts[0] < 1) return [];
        int n = counts[0];
        return [.. missing.Select(p => p % n).Distinct().Order().Select(k => $"{k}/{n}")];
    }

    /// <summary>Point indices as compact ranges ("3, 7–9, 12"), at most 40 items.</summary>
    public static string Ranges(IReadOnlyList<long> sorted)
    {
        var items = new List<string>();
        for (int i = 0; i < sorted.Count;)
        {
            int j = i;
            while (j + 1 < sorted.Count && sorted[j + 1] == sorted[j] + 1) j++;
            items.Add(j == i ? $"{sorted[i]}" : j == i + 1 ? $"{sorted[i]}, {sorted[j]}" : $"{sorted[i]}–{sorted[j]}");
            i = j + 1;
        }
        return items.Count <= 40 ? string.Join(", ", items) : string.Join(", ", items.Take(40)) + $", … ({items.Count - 40} more)";
    }
}

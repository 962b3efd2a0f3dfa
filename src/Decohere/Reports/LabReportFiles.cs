using ScottPlot;
using System.Text.Json.Nodes;
using Decohere.Reports.Plotting;

namespace Decohere.Reports;

/// <summary>The file set every lab analysis writes: STEM.parquet, STEM.json and STEM.png/.svg.</summary>
internal static class LabReportFiles
{
    /// <summary>
    /// Writes STEM.parquet (by <paramref name="table"/>), STEM.json and STEM.png/.svg, each atomically and in that order (the
    /// summary after the table it describes); returns the paths json, table, png, svg.
    /// </summary>
    internal static async Task<IReadOnlyList<string>> Write(string directory, string stem, Func<string, Task> table, Func<JsonObject> json,
        Func<Plot> plot, CancellationToken cancel)
    {
        Directory.CreateDirectory(directory);
        string parquet = Path.Combine(directory, stem + ".parquet"), summary = Path.Combine(directory, stem + ".json");
        await table(parquet);
        cancel.ThrowIfCancellationRequested();
        SummaryJson.Write(json(), summary);
        cancel.ThrowIfCancellationRequested();
        return [summary, parquet, .. Figure.Save(plot(), Path.Combine(directory, stem), 1200, 700)];
    }
}

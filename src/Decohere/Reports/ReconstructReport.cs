using System.Text.Json.Nodes;
using Decohere.Analyses.Lattices;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>Writes reconstruct.parquet (one row per fitted term) and reconstruct.json (terms, undetermined combinations, goodness of fit), each atomically.</summary>
public sealed class ReconstructReport : IReport<ReconstructionResult>
{
    /// <summary>Columns of reconstruct.parquet (Hz); stderr and interval are null for terms the data do not determine.</summary>
    public static IReadOnlyList<ColumnSpec> Columns { get; } =
    [
        ColumnSpec.String("term"), ColumnSpec.String("kind"), ColumnSpec.Int("site_a"), ColumnSpec.Int("site_b"),
        ColumnSpec.Double("value_hz"), ColumnSpec.NullableDouble("stderr_hz"), ColumnSpec.NullableDouble("ci_low_hz"), ColumnSpec.NullableDouble("ci_high_hz"),
        ColumnSpec.Double("nominal_hz"), ColumnSpec.Bool("identified"),
    ];

    /// <inheritdoc />
    public async Task<IReadOnlyList<string>> WriteAsync(ReconstructionResult result, string directory, CancellationToken cancel = default)
    {
        Directory.CreateDirectory(directory);
        string table = Path.Combine(directory, "reconstruct.parquet"), json = Path.Combine(directory, "reconstruct.json");
        var t = result.Terms;
        Array[] data =
        [
            t.Select(x => x.Name).ToArray(), t.Select(x => Kind(x.Kind)).ToArray(), t.Select(x => x.SiteA).ToArray(), t.Select(x => x.SiteB).ToArray(),
            t.Select(x => x.ValueHz).ToArray(), t.Select(x => x.StdErrHz).ToArray(), t.Select(x => x.LowHz).ToArray(),
            t.Select(x => x.HighHz).ToArray(), t.Select(x => x.NominalHz).ToArray(), t.Select(x => x.Identified).ToArray(),
        ];
        await ParquetTable.WriteAsync(table, Columns, data, result.Provenance.ToKeyValues(), cancel: cancel);
        cancel.ThrowIfCancellationRequested();
        var root = SummaryJson.ProvenanceRoot(result.Provenance);
        root["method"] = "maximum likelihood (weighted least squares) of H = Σ t_i M_i on the lattice's graph; Wald intervals from the inverse Fisher matrix";
        const string undetermined = "the data do not determine this term alone (see undetermined_combinations)";
        root["terms"] = new JsonObject(t.Select(x =>
        {
            var o = new JsonObject { ["kind"] = Kind(x.Kind), ["site_a"] = x.SiteA, ["site_b"] = x.SiteB };
            SummaryJson.Set(o, "value_hz", x.ValueHz, undetermined);
            SummaryJson.Set(o, "stderr_hz", x.StdErrHz, undetermined);
            SummaryJson.Set(o, "ci_low_hz", x.LowHz, undetermined);
            SummaryJson.Set(o, "ci_high_hz", x.HighHz, undetermined);
            SummaryJson.Set(o, "nominal_hz", x.NominalHz, "the scenario gives no nominal value for this term");
            o["identified"] = x.Identified;
            return KeyValuePair.Create(x.Name, (JsonNode?)o);
        }));
        root["undetermined_combinations"] = new JsonArray(result.UndeterminedCombinations.Select(c => (JsonNode)JsonValue.Create(c)).ToArray());
        root["goodness_of_fit"] = new JsonObject
        {
            ["chi_square"] = SummaryJson.Number(result.ChiSquare),
            ["degrees_of_freedom"] = result.DegreesOfFreedom,
        };
        SummaryJson.Set(root["goodness_of_fit"]!.AsObject(), "p_value", result.PValue, "no degrees of freedom left to test the fit");
        root["iterations"] = result.Iterations;
        root["warnings"] = SummaryJson.Strings(result.Warnings);
        SummaryJson.Write(root, json);
        return [table, json];
    }

    /// <summary>Term kind as written in files: onsite, nearest, next_nearest.</summary>
    public static string Kind(TermKind k) => k switch { TermKind.OnSite => "onsite", TermKind.Nearest => "nearest", _ => "next_nearest" };
}

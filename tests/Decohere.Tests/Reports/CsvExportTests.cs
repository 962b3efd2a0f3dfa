using System.Globalization;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports;

namespace Decohere.Tests.Reports;

/// <summary>CSV copies of Parquet tables, checked against DuckDB's own reading of both files.</summary>
public class CsvExportTests
{
    [Fact]
    public async Task ACsvCopyHoldsTheParquetTablesValuesExactly()
    {
        string dir = TestPaths.NewTempDirectory();
        string parquet = Path.Combine(dir, "t.parquet");
        // Doubles that do not survive 15-digit printing, a null, text that needs quoting, and more rows than one read chunk.
        int n = 70_000;
        double[] x = [.. Enumerable.Range(0, n).Select(k => 0.1 * k + 1.0 / 3)];
        double?[] y = [.. Enumerable.Range(0, n).Select(k => k % 7 == 0 ? (double?)null : Math.PI * k * 1e-9)];
        long[] id = [.. Enumerable.Range(0, n).Select(k => (long)k * 1_000_000_007)];
        string[] label = [.. Enumerable.Range(0, n).Select(k => k % 2 == 0 ? "plain" : "with, comma \"and quote\"")];
        await ParquetTable.WriteAsync(parquet,
            [ColumnSpec.Double("x_s"), ColumnSpec.NullableDouble("y"), ColumnSpec.Long("id"), ColumnSpec.String("label")],
            [x, y, id, label], new Dictionary<string, string>());
        var written = CsvExport.Beside([parquet]);
        string csv = Assert.Single(written);
        Assert.Equal(Path.Combine(dir, "t.csv"), csv);

        string[] lines = File.ReadAllLines(csv);
        Assert.Equal("x_s,y,id,label", lines[0]);
        Assert.Equal(n + 1, lines.Length);
        Assert.Equal("", lines[1].Split(',')[1]); // y is null in row 0: an empty field
        // Round trip: every double parses back to the identical value (invariant culture).
        for (int k = 0; k < n; k += 997)
            Assert.Equal(x[k], double.Parse(lines[k + 1].Split(',')[0], CultureInfo.InvariantCulture));

        // DuckDB reads both files independently; they must agree value for value (nulls included).
        var fromParquet = DuckDb.Query($"SELECT x_s, y, id, label FROM read_parquet({DuckDb.Literal(parquet)}) ORDER BY id");
        var fromCsv = DuckDb.Query($"SELECT x_s, y, id, label FROM read_csv({DuckDb.Literal(csv)}, header = true, " +
                                   "columns = {'x_s': 'DOUBLE', 'y': 'DOUBLE', 'id': 'BIGINT', 'label': 'VARCHAR'}) ORDER BY id");
        Assert.Equal(n, fromCsv.Count);
        for (int k = 0; k < n; k++) Assert.Equal(fromParquet[k], fromCsv[k]);
    }

    [Theory]
    [InlineData("parquet", false)]
    [InlineData("parquet,csv", true)]
    [InlineData(" csv ", true)]
    [InlineData(null, false)]
    public void FormatListsAreRead(string? formats, bool csv) => Assert.Equal(csv, CsvExport.WantsCsv(formats));

    [Fact]
    public void AnUnknownFormatIsRefusedByTheSettingsName()
    {
        var e = Assert.Throws<InputException>(() => CsvExport.WantsCsv("parquet,xlsx"));
        Assert.StartsWith("format: 'xlsx'", e.Message);
    }
}

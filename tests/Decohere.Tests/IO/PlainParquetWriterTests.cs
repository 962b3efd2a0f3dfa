using ParquetSharp;
using Decohere.IO;

namespace Decohere.Tests.IO;

/// <summary>The plain-encoding writer's files read back by two independent Parquet implementations, DuckDB and Apache Arrow's C++ reader (through ParquetSharp).</summary>
public class PlainParquetWriterTests
{
    [Fact]
    public async Task ConstantAndRegularColumnsReadBackEverywhere()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "t.parquet");
        ColumnSpec[] columns = [ColumnSpec.Long("shot"), ColumnSpec.Double("delay_s"), ColumnSpec.String("mode"), ColumnSpec.Double("x"), ColumnSpec.String("label")];
        var random = new Random(5);
        var x = Enumerable.Range(0, 1000).Select(_ => random.NextDouble() - 0.5).ToArray();
        await using (var writer = new PlainParquetWriter(path, columns, new Dictionary<string, string> { ["k"] = "välue" }))
        {
            // Two row groups: constant columns given as one-element arrays, a text column with a value per row.
            writer.WriteRowGroup(600, [Enumerable.Range(0, 600).Select(i => (long)i).ToArray(), new[] { 0.001 }, new[] { "drum" }, x[..600],
                Enumerable.Range(0, 600).Select(i => $"r{i}").ToArray()]);
            writer.WriteRowGroup(400, [Enumerable.Range(600, 400).Select(i => (long)i).ToArray(), new[] { 0.002 }, new[] { "drum" }, x[600..],
                Enumerable.Range(600, 400).Select(i => $"r{i}").ToArray()]);
            await writer.CommitAsync();
        }
        string file = DuckDb.Literal(path);

        var schema = DuckDb.Query($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet({file}))");
        Assert.Equal(["shot", "delay_s", "mode", "x", "label"], schema.Select(r => (string)r[0]!));
        Assert.Equal(["BIGINT", "DOUBLE", "VARCHAR", "DOUBLE", "VARCHAR"], schema.Select(r => (string)r[1]!));
        var rows = DuckDb.Query($"SELECT shot, delay_s, mode, x, label FROM read_parquet({file}) ORDER BY shot");
        Assert.Equal(1000, rows.Count);
        for (int i = 0; i < 1000; i++)
        {
            Assert.Equal((long)i, rows[i][0]);
            Assert.Equal(i < 600 ? 0.001 : 0.002, (double)rows[i][1]!);
            Assert.Equal("drum", rows[i][2]);
            Assert.Equal(x[i], (double)rows[i][3]!);
            Assert.Equal($"r{i}", rows[i][4]);
        }
        var meta = DuckDb.Query($"SELECT decode(key), decode(value) FROM parquet_kv_metadata({file})");
        Assert.Contains(meta, r => (string)r[0]! == "k" && (string)r[1]! == "välue");

        using var reader = new ParquetFileReader(path);
        Assert.Equal(2, reader.FileMetaData.NumRowGroups);
        Assert.Equal("välue", reader.FileMetaData.KeyValueMetadata["k"]);
        using var group = reader.RowGroup(1);
        using (var delays = group.Column(1).LogicalReader<double>())
            Assert.All(delays.ReadAll(400), d => Assert.Equal(0.002, d));
        using (var xs = group.Column(3).LogicalReader<double>())
            Assert.Equal(x[600..], xs.ReadAll(400));
        using (var modes = group.Column(2).LogicalReader<string>())
            Assert.All(modes.ReadAll(400), m => Assert.Equal("drum", m));
    }
}

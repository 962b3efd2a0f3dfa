using Decohere.IO;

namespace Decohere.Tests.IO;

/// <summary>Tables written by <see cref="ParquetTable"/> read back by DuckDB, an independent Parquet implementation.</summary>
public class ParquetTableTests
{
    private static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Long("shot") with { Delta = true }, ColumnSpec.Double("delay_s") with { Dictionary = true }, ColumnSpec.String("mode"),
        ColumnSpec.Double("x"), ColumnSpec.NullableDouble("z"), ColumnSpec.NullableDouble("w"), ColumnSpec.Int("n"),
        ColumnSpec.Bool("ok"), ColumnSpec.String("label"),
    ];

    private static async Task Write(string path, double[] x, ParquetCompression compression)
    {
        await using var table = await ParquetTable.CreateAsync(path, Columns, new Dictionary<string, string> { ["k"] = "välue" }, default, compression);
        // Two row groups: constant columns as one-element arrays; z nullable from double?[], w from double[] with NaN and ∞.
        for (int g = 0; g < 2; g++)
        {
            int start = g * 600, n = g == 0 ? 600 : 400;
            var rows = Enumerable.Range(start, n).ToArray();
            await table.WriteRowGroupAsync(n,
            [
                rows.Select(i => (long)i).ToArray(), new[] { g == 0 ? 0.001 : 0.002 }, new[] { "drum" }, x[start..(start + n)],
                rows.Select(i => i % 3 == 0 ? (double?)null : i * 0.5).ToArray(),
                rows.Select(i => i % 5 == 0 ? double.NaN : i % 7 == 0 ? double.PositiveInfinity : -i).ToArray(),
                rows.ToArray(), rows.Select(i => i % 2 == 0).ToArray(),
                rows.Select(i => (i % 4 == 0 ? "ß" : "r") + i).Select(s => s.AsMemory()).ToArray(),
            ]);
        }
        Assert.Equal(1000, table.RowCount);
        await table.CommitAsync();
    }

    [Theory]
    [InlineData(ParquetCompression.None, "UNCOMPRESSED")]
    [InlineData(ParquetCompression.Snappy, "SNAPPY")]
    [InlineData(ParquetCompression.Zstd, "ZSTD")]
    public async Task TypesNullsConstantsAndMetadataReadBackThroughDuckDb(ParquetCompression compression, string codec)
    {
        string dir = TestPaths.NewTempDirectory();
        string path = Path.Combine(dir, "t.parquet");
        var random = new Random(5);
        var x = Enumerable.Range(0, 1000).Select(_ => random.NextDouble() - 0.5).ToArray();
        await Write(path, x, compression);
        string file = DuckDb.Literal(path);

        var schema = DuckDb.Query($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet({file}))");
        Assert.Equal(Columns.Select(c => c.Name), schema.Select(r => (string)r[0]!));
        Assert.Equal(["BIGINT", "DOUBLE", "VARCHAR", "DOUBLE", "DOUBLE", "DOUBLE", "INTEGER", "BOOLEAN", "VARCHAR"], schema.Select(r => (string)r[1]!));
        var rows = DuckDb.Query($"SELECT shot, delay_s, mode, x, z, w, n, ok, label FROM read_parquet({file}) ORDER BY shot");
        Assert.Equal(1000, rows.Count);
        for (int i = 0; i < 1000; i++)
        {
            Assert.Equal((long)i, rows[i][0]);
            Assert.Equal(i < 600 ? 0.001 : 0.002, (double)rows[i][1]!);
            Assert.Equal("drum", rows[i][2]);
            Assert.Equal(x[i], (double)rows[i][3]!);
            Assert.Equal(i % 3 == 0 ? null : i * 0.5, (double?)rows[i][4]);
            Assert.Equal(i % 5 == 0 || i % 7 == 0 ? null : -i, (double?)rows[i][5]);
            Assert.Equal(i, rows[i][6]);
            Assert.Equal(i % 2 == 0, rows[i][7]);
            Assert.Equal((i % 4 == 0 ? "ß" : "r") + i, rows[i][8]);
        }
        var meta = DuckDb.Query($"SELECT decode(key), decode(value) FROM parquet_kv_metadata({file})");
        Assert.Contains(meta, r => (string)r[0]! == "k" && (string)r[1]! == "välue");
        // Nullability in the schema: only the nullable columns are OPTIONAL (DuckDB's parquet_schema, repetition_type).
        var repetition = DuckDb.Query($"SELECT name, repetition_type FROM parquet_schema({file}) WHERE name <> 'schema'")
            .ToDictionary(r => (string)r[0]!, r => (string)r[1]!);
        Assert.All(Columns, c => Assert.Equal(c.Type == typeof(double?) ? "OPTIONAL" : "REQUIRED", repetition[c.Name]));
        var codecs = DuckDb.Query($"SELECT DISTINCT compression FROM parquet_metadata({file})");
        Assert.Equal(codec, Assert.Single(codecs)[0]);
        var groups = DuckDb.Query($"SELECT count(DISTINCT row_group_id) FROM parquet_metadata({file})");
        Assert.Equal(2L, Convert.ToInt64(groups[0][0]));
        Assert.Empty(Directory.GetFiles(dir, "*.partial-*"));
    }

    [Fact]
    public async Task TheSameRowsGiveTheSameBytes()
    {
        string dir = TestPaths.NewTempDirectory();
        var x = Enumerable.Range(0, 1000).Select(i => Math.Sin(i)).ToArray();
        await Write(Path.Combine(dir, "a.parquet"), x, ParquetCompression.Zstd);
        await Task.Delay(1100);   // a timestamp in the file would differ by now
        await Write(Path.Combine(dir, "b.parquet"), x, ParquetCompression.Zstd);
        Assert.Equal(File.ReadAllBytes(Path.Combine(dir, "a.parquet")), File.ReadAllBytes(Path.Combine(dir, "b.parquet")));
    }

    [Fact]
    public async Task ARowGroupWrittenInChunksIsTheFileOfItsWholeColumns()
    {
        // 3000 rows through buffers of 1024 (two full chunks and a short one) against the same rows as whole columns; the
        // whole-column path is read by DuckDB above, so equal bytes carry that check over.
        string dir = TestPaths.NewTempDirectory();
        const int n = 3000, chunk = 1024;
        var spec = Columns.Where(c => c.Name != "label").ToArray();
        long[] Shots(int from, int count) => [.. Enumerable.Range(from, count).Select(i => (long)i)];
        double[] X(int from, int count) => [.. Enumerable.Range(from, count).Select(i => Math.Sin(0.01 * i))];
        double?[] Z(int from, int count) => [.. Enumerable.Range(from, count).Select(i => i % 3 == 0 ? (double?)null : i * 0.5)];
        double[] W(int from, int count) => [.. Enumerable.Range(from, count).Select(i => i % 5 == 0 ? double.NaN : -i)];
        int[] N(int from, int count) => [.. Enumerable.Range(from, count)];
        bool[] Ok(int from, int count) => [.. Enumerable.Range(from, count).Select(i => i % 2 == 0)];
        string whole = Path.Combine(dir, "whole.parquet"), chunked = Path.Combine(dir, "chunked.parquet");
        await using (var table = await ParquetTable.CreateAsync(whole, spec, new Dictionary<string, string>()))
        {
            table.WriteRowGroup(n, [Shots(0, n), new[] { 0.001 }, new[] { "drum" }, X(0, n), Z(0, n), W(0, n), N(0, n), Ok(0, n)]);
            await table.CommitAsync();
        }
        await using (var table = await ParquetTable.CreateAsync(chunked, spec, new Dictionary<string, string>()))
        {
            Array[] buffers = [new long[chunk], new[] { 0.001 }, new[] { "drum" }, new double[chunk], new double?[chunk], new double[chunk], new int[chunk], new bool[chunk]];
            var filled = new List<(int, int)>();
            table.WriteRowGroup(n, buffers, (start, count) =>
            {
                filled.Add((start, count));
                Array[] rows = [Shots(start, count), null!, null!, X(start, count), Z(start, count), W(start, count), N(start, count), Ok(start, count)];
                foreach (int c in new[] { 0, 3, 4, 5, 6, 7 }) Array.Copy(rows[c], buffers[c], count);
            });
            Assert.Equal([(0, 1024), (1024, 1024), (2048, 952)], filled);
            Assert.Equal(n, table.RowCount);
            await table.CommitAsync();
        }
        Assert.Equal(File.ReadAllBytes(whole), File.ReadAllBytes(chunked));
    }

    [Fact]
    public async Task WholeTablesAreSplitIntoRowGroups()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "t.parquet");
        var values = Enumerable.Range(0, 2500).Select(i => (double)i).ToArray();
        await ParquetTable.WriteAsync(path, [ColumnSpec.Double("v"), ColumnSpec.String("c")], [values, new[] { "k" }],
            new Dictionary<string, string>(), rowGroup: 1000);
        string file = DuckDb.Literal(path);
        var sums = DuckDb.Query($"SELECT count(*), sum(v), min(c), max(c) FROM read_parquet({file})")[0];
        Assert.Equal(2500L, Convert.ToInt64(sums[0]));
        Assert.Equal(2499.0 * 2500 / 2, (double)sums[1]!);
        Assert.Equal("k", sums[2]);
        Assert.Equal("k", sums[3]);
        var groups = DuckDb.Query($"SELECT DISTINCT row_group_id, row_group_num_rows FROM parquet_metadata({file}) ORDER BY row_group_id");
        Assert.Equal([1000L, 1000L, 500L], groups.Select(r => Convert.ToInt64(r[1])));
    }

    [Fact]
    public async Task SplitColumnsReadBackExactlyAndStatisticsAreWhereAsked()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "t.parquet");
        var random = new Random(3);
        // Smooth values and random ones (every bit pattern of the mantissa), with a sign change and subnormal-free extremes.
        var smooth = Enumerable.Range(0, 3000).Select(i => 0.5 + 1e-3 * Math.Sin(i * 1e-3)).ToArray();
        var rough = Enumerable.Range(0, 3000).Select(_ => (random.NextDouble() - 0.5) * Math.Pow(10, random.Next(-300, 300))).ToArray();
        ColumnSpec[] columns =
        [
            ColumnSpec.Double("t"), ColumnSpec.Double("smooth") with { Split = true, Statistics = false },
            ColumnSpec.Double("rough") with { Split = true },
        ];
        var t = Enumerable.Range(0, 3000).Select(i => i * 1e-6).ToArray();
        await ParquetTable.WriteAsync(path, columns, [t, smooth, rough], new Dictionary<string, string>(), rowGroup: 2000);
        string file = DuckDb.Literal(path);
        var rows = DuckDb.Query($"SELECT t, smooth, rough FROM read_parquet({file}) ORDER BY t");
        Assert.Equal(3000, rows.Count);
        for (int i = 0; i < rows.Count; i++)
        {
            Assert.Equal(smooth[i], (double)rows[i][1]!);
            Assert.Equal(rough[i], (double)rows[i][2]!);
        }
        // DuckDB's parquet_metadata: the column chunks' encodings and statistics (null where the file has none).
        var chunks = DuckDb.Query($"SELECT path_in_schema, encodings, stats_min IS NOT NULL FROM parquet_metadata({file}) WHERE row_group_id = 0")
            .ToDictionary(r => (string)r[0]!, r => (Encodings: (string)r[1]!, Statistics: (bool)r[2]!));
        Assert.Contains("BYTE_STREAM_SPLIT", chunks["smooth"].Encodings);
        Assert.Contains("BYTE_STREAM_SPLIT", chunks["rough"].Encodings);
        Assert.DoesNotContain("BYTE_STREAM_SPLIT", chunks["t"].Encodings);
        Assert.True(chunks["t"].Statistics);
        Assert.True(chunks["rough"].Statistics);
        Assert.False(chunks["smooth"].Statistics);
        await Assert.ThrowsAsync<ArgumentException>(() => ParquetTable.WriteAsync(path, [ColumnSpec.Long("k") with { Split = true }], [new long[] { 1 }],
            new Dictionary<string, string>()));
    }

    [Fact]
    public async Task TextGivenAsCategoryIndicesReadsAsText()
    {
        string dir = TestPaths.NewTempDirectory();
        string path = Path.Combine(dir, "t.parquet");
        var stage = ColumnSpec.String("stage") with { Categories = ["cool", "squeeze", "relâche"] };
        await ParquetTable.WriteAsync(path, [stage, ColumnSpec.Long("k")], [new[] { 2, 0, 1, 1, 2 }, new long[] { 0, 1, 2, 3, 4 }],
            new Dictionary<string, string>());
        var rows = DuckDb.Query($"SELECT stage FROM read_parquet({DuckDb.Literal(path)}) ORDER BY k");
        Assert.Equal(["relâche", "cool", "squeeze", "squeeze", "relâche"], rows.Select(r => (string)r[0]!));

        await Assert.ThrowsAsync<ArgumentException>(() => ParquetTable.WriteAsync(Path.Combine(dir, "u.parquet"), [stage], [new[] { 3 }],
            new Dictionary<string, string>()));
        Assert.False(File.Exists(Path.Combine(dir, "u.parquet")));
    }

    [Fact]
    public async Task AnEmptyTableHasItsSchema()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "t.parquet");
        await ParquetTable.WriteAsync(path, [ColumnSpec.NullableDouble("v"), ColumnSpec.String("c")], [Array.Empty<double>(), Array.Empty<string>()],
            new Dictionary<string, string>());
        string file = DuckDb.Literal(path);
        Assert.Equal(0L, Convert.ToInt64(DuckDb.Query($"SELECT count(*) FROM read_parquet({file})")[0][0]));
        Assert.Equal(["v", "c"], DuckDb.Query($"SELECT column_name FROM (DESCRIBE SELECT * FROM read_parquet({file}))").Select(r => (string)r[0]!));
    }

    [Fact]
    public async Task AShortColumnIsRefusedAndLeavesNoFile()
    {
        string dir = TestPaths.NewTempDirectory();
        var e = await Assert.ThrowsAsync<ArgumentException>(async () =>
        {
            await using var table = await ParquetTable.CreateAsync(Path.Combine(dir, "t.parquet"), [ColumnSpec.Double("x"), ColumnSpec.Double("y")],
                new Dictionary<string, string>());
            await table.WriteRowGroupAsync(3, [new double[] { 1, 2, 3 }, new double[] { 1, 2 }]);
        });
        Assert.Contains("column y", e.Message);
        Assert.Empty(Directory.GetFiles(dir));
    }
}

using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;

namespace Decohere.Tests.IO;

/// <summary>Parquet data files as other tools write them (DuckDB, pandas and polars mark every column OPTIONAL).</summary>
public class ParquetInputTests
{
    private static string Write(string select)
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "data.parquet");
        DuckDb.Query($"COPY ({select}) TO {DuckDb.Literal(path)} (FORMAT parquet)");
        return path;
    }

    [Fact]
    public async Task OptionalColumnsWrittenByDuckDbAreRead()
    {
        string path = Write("SELECT i * 0.001::DOUBLE AS delay_s, (i + 0.5)::DOUBLE AS var_i, i::BIGINT AS shots, 'drum' AS mode, i::INTEGER AS k, (i * 0.25)::FLOAT AS f FROM range(1, 6) t(i)");
        var table = await DataTable.LoadAsync(path);
        Assert.Equal(5, table.RowCount);
        Assert.Equal([0.001, 0.002, 0.003, 0.004, 0.005], table.Numbers("delay_s", "delay_s"));
        Assert.Equal([1.5, 2.5, 3.5, 4.5, 5.5], table.Numbers("var_i", "var_i"));
        Assert.Equal([1.0, 2, 3, 4, 5], table.Numbers("shots", "shots"));
        Assert.Equal([1.0, 2, 3, 4, 5], table.Numbers("k", "k"));
        Assert.Equal([0.25, 0.5, 0.75, 1, 1.25], table.Numbers("f", "f"));
        Assert.All(table.Texts("mode"), m => Assert.Equal("drum", m));
        // A flat column may have a dot in its name; only a path of several parts is nested.
        var dotted = await DataTable.LoadAsync(Write("SELECT 1.5::DOUBLE AS \"var.i\""));
        Assert.Equal([1.5], dotted.Numbers("var.i", "var_i"));
    }

    [Fact]
    public async Task ShotsCopiedByDuckDbIntoOptionalColumnsFitExactlyLikeTheToolsOwn()
    {
        var demo = ScenarioLoader.Demo();
        var scenario = demo with { Readout = demo.Readout! with { Shots = 2000, DelaysS = [0, 3e-3, 6e-3] }, Seed = 7 };
        var sampler = new ShotSampler(scenario, Dynamics.Solve(scenario));
        string dir = TestPaths.NewTempDirectory();
        string own = Path.Combine(dir, "shots.parquet"), copy = Path.Combine(dir, "duck.parquet");
        await using (var table = await ShotsTable.CreateAsync(own, sampler, Provenance.For(scenario)))
        {
            await sampler.RunAsync(table.WriteAsync);
            await table.CommitAsync();
        }
        DuckDb.Query($"COPY (SELECT * FROM read_parquet({DuckDb.Literal(own)})) TO {DuckDb.Literal(copy)} (FORMAT parquet, COMPRESSION zstd)");
        // The copy really is the case that failed: every column OPTIONAL (nullable), compressed.
        var repetition = DuckDb.Query($"SELECT name, repetition_type FROM parquet_schema({DuckDb.Literal(copy)}) WHERE name IN ('i', 'q', 'delay_s', 'mode')");
        Assert.Equal(4, repetition.Count);
        Assert.All(repetition, row => Assert.Equal("OPTIONAL", row[1]));

        string[] free = ["modes.drum.bath.temperature", "readout.added_noise"];
        var settings = new FitSettings { Free = [.. free], Starts = 1, Profiles = false };
        var fromOwn = FitAnalysis.Solve(scenario, settings, await FitDataReader.ReadAsync(own, scenario));
        var fromCopy = FitAnalysis.Solve(scenario, settings, await FitDataReader.ReadAsync(copy, scenario));
        Assert.Equal(fromOwn.Parameters.Select(p => (p.Name, p.Value, p.StandardError)), fromCopy.Parameters.Select(p => (p.Name, p.Value, p.StandardError)));
    }

    [Fact]
    public async Task ANullInAUsedColumnIsRefusedWithRowAndColumn()
    {
        string path = Write("SELECT * FROM (VALUES (0.001::DOUBLE, 3.5::DOUBLE, 3.0::DOUBLE, 100::BIGINT), (0.002, NULL, 3.0, 100), (0.003, 3.5, 3.0, 100)) t(delay_s, var_i, var_q, shots)");
        var e = await Assert.ThrowsAsync<InputException>(() => FitDataReader.ReadAsync(path, DataReaderTests.Scenario));
        Assert.Contains("row 2, column var_i", e.Message);
        Assert.Contains("missing", e.Message);
        // A null in a column the fit does not use is no problem.
        string unused = Write("SELECT * FROM (VALUES (0.001::DOUBLE, 3.5::DOUBLE, 3.0::DOUBLE, 100::BIGINT, NULL::VARCHAR), (0.002, 3.5, 3.0, 100, 'x')) t(delay_s, var_i, var_q, shots, note)");
        Assert.Equal(2, (await FitDataReader.ReadAsync(unused, DataReaderTests.Scenario)).Delays.Length);
    }

    [Theory]
    [InlineData("SELECT [0.001, 0.002] AS delay_s, 3.5::DOUBLE AS var_i, 3.0::DOUBLE AS var_q, 100 AS shots", "delay_s")]
    [InlineData("SELECT {'a': 1.0, 'b': 2.0} AS delay_s, 3.5::DOUBLE AS var_i", "delay_s.a")]
    public async Task NestedColumnsAreRefusedWithAMessage(string select, string column)
    {
        var e = await Assert.ThrowsAsync<InputException>(() => DataTable.LoadAsync(Write(select)));
        Assert.Contains("data.parquet", e.Message);
        Assert.Contains(column, e.Message);
        Assert.Contains("nested", e.Message);
    }

    [Fact]
    public async Task AVariancesFileWithAnAstronomicalShotCountIsRefused()
    {
        string path = Write("SELECT * FROM (VALUES (0.001::DOUBLE, 3.5::DOUBLE, 3.0::DOUBLE, 1e300::DOUBLE), (0.002, 3.5, 3.0, 100)) t(delay_s, var_i, var_q, shots)");
        var e = await Assert.ThrowsAsync<InputException>(() => FitDataReader.ReadAsync(path, DataReaderTests.Scenario));
        Assert.Contains("row 1, column shots", e.Message);
        Assert.Contains("2147483647", e.Message);
    }

    public static TheoryData<string> Corruptions => ["truncated", "footer length", "footer bytes", "first page", "magic only"];

    [Theory]
    [MemberData(nameof(Corruptions))]
    public async Task ACorruptFileIsAnInputErrorNamingTheFile(string corruption)
    {
        string path = Write("SELECT i * 0.001::DOUBLE AS delay_s, (i + 0.5)::DOUBLE AS var_i, 3.0::DOUBLE AS var_q, 100::BIGINT AS shots FROM range(1, 200) t(i)");
        byte[] bytes = File.ReadAllBytes(path);
        int footer = BitConverter.ToInt32(bytes, bytes.Length - 8);
        switch (corruption)
        {
            case "truncated": bytes = [.. bytes.Take(bytes.Length / 2), .. "PAR1"u8.ToArray()]; break;
            case "footer length": BitConverter.GetBytes(int.MaxValue - 7).CopyTo(bytes, bytes.Length - 8); break;
            case "footer bytes":
                for (int k = bytes.Length - 8 - footer; k < bytes.Length - 8; k += 3) bytes[k] ^= 0x5A;
                break;
            case "first page":
                for (int k = 4; k < 64; k++) bytes[k] = 0xFF;
                break;
            case "magic only": bytes = [.. "PAR1"u8.ToArray(), .. "PAR1"u8.ToArray()]; break;
        }
        File.WriteAllBytes(path, bytes);
        var e = await Assert.ThrowsAsync<InputException>(() => FitDataReader.ReadAsync(path, DataReaderTests.Scenario));
        Assert.Contains("data.parquet", e.Message);
    }
}

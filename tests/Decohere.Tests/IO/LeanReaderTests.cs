using System.Globalization;
using Decohere.Core;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Tests.IO;

/// <summary>Run alone: the allocation test measures the whole process.</summary>
[CollectionDefinition(nameof(AllocationCollection), DisableParallelization = true)]
public sealed class AllocationCollection;

/// <summary>The data readers read only the columns a fit uses, straight into numbers.</summary>
[Collection(nameof(AllocationCollection))]
public class LeanReaderTests
{
    private static readonly Decohere.Scenarios.Scenario Scenario = DataReaderTests.Scenario;

    private static string Temp(string extension) => Path.Combine(Path.GetTempPath(), $"decohere-lean-{Guid.NewGuid():N}.{extension}");

    [Fact]
    public async Task ACsvCostsItsUsedColumnsNotItsFields()
    {
        // 200 000 shots in 5 columns of which the fit uses 3 (delay_s, i, q): 4.8 MB of numbers. The reader may allocate
        // at most twice that (plus its line buffers); the string-per-field reader it replaces allocated about 800 bytes a row.
        const int rows = 200_000;
        string path = Temp("csv");
        await using (var w = new StreamWriter(path))
        {
            await w.WriteLineAsync("shot,delay_s,i,q,note");
            for (int r = 0; r < rows; r++)
                await w.WriteLineAsync(string.Create(CultureInfo.InvariantCulture, $"{r},{(r % 4) * 0.01},{Math.Sin(r)},{Math.Cos(3 * r)},text {r}"));
        }
        try
        {
            await FitDataReader.ReadAsync(path, Scenario);   // compile and warm every path first
            GC.Collect();
            long before = GC.GetTotalAllocatedBytes(precise: true);
            var data = await FitDataReader.ReadAsync(path, Scenario);
            long allocated = GC.GetTotalAllocatedBytes(precise: true) - before;
            Assert.Equal(rows, data.TotalShots);
            Assert.InRange(allocated, 3 * 8 * rows, 2 * 3 * 8 * rows + (2 << 20));
        }
        finally { File.Delete(path); }
    }

    [Fact]
    public async Task UnusedColumnsAreNeitherParsedNorChecked()
    {
        // A text column and a column of garbage the fit does not use; the used columns are read as before.
        string path = Temp("csv");
        await File.WriteAllTextAsync(path, "delay_s,junk,var_i,var_q,shots\n# comment\n0.001,??,3.5,3.25,1000\n\n0.02,,30.5,29.75,2000\n");
        try
        {
            var data = await FitDataReader.ReadAsync(path, Scenario);
            Assert.Equal(DataShape.Variances, data.Shape);
            Assert.Equal("line 3", data.Delays[0].Row);
            Assert.Equal("line 5", data.Delays[1].Row);
            // A bad value in a used column still names its file line past blank and comment lines.
            await File.WriteAllTextAsync(path, "delay_s,var_i,var_q,shots\n# comment\n\n0.001,3.5,3.25,1000\n# more\n0.002,x,3.25,1000\n");
            var e = await Assert.ThrowsAsync<InputException>(() => FitDataReader.ReadAsync(path, Scenario));
            Assert.Contains("line 6, column var_i: 'x' is not a number", e.Message);
        }
        finally { File.Delete(path); }
    }

    [Fact]
    public async Task CrLfLineEndsQuotedFieldsAndAMissingLastNewlineReadAsPlainLines()
    {
        // RFC 4180 (common practice for CSV): CR LF line ends, fields in double quotes; a lone CR also ends a line, as in TextReader.ReadLine.
        string path = Temp("csv");
        await File.WriteAllTextAsync(path, "\uFEFF\"delay_s\",var_i,var_q,shots\r\n0.001,\"3.5\",3.25,1000\r0.02,30.5,29.75,2000");
        try
        {
            var data = await FitDataReader.ReadAsync(path, Scenario);
            Assert.Equal([0.001, 0.02], data.Delays.Select(d => d.DelayS));
            Assert.Equal(3.5, data.Delays[0].VarI);
            Assert.Equal("line 3", data.Delays[1].Row);
        }
        finally { File.Delete(path); }
    }

    [Fact]
    public async Task AParquetColumnTheFitDoesNotUseIsNotRead()
    {
        // DuckDB (an independent writer) adds a boolean column, a type the reader refuses where it is used.
        string path = Temp("parquet");
        DuckDb.Query($"COPY (SELECT 0.001 * (i + 1) AS delay_s, 3.5 + i AS var_i, 3.25 AS var_q, 1000 AS shots, i % 2 = 0 AS flag FROM range(0, 4) t(i)) TO {DuckDb.Literal(path)} (FORMAT parquet)");
        try
        {
            var data = await FitDataReader.ReadAsync(path, Scenario);
            Assert.Equal(4, data.Delays.Length);
            var e = await Assert.ThrowsAsync<InputException>(() => FitDataReader.ReadAsync(path, Scenario, DataOptions.Parse(["shots=flag"], null)));
            Assert.Contains("flag", e.Message);
        }
        finally { File.Delete(path); }
    }
}

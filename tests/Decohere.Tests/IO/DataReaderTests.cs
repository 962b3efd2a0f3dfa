using DuckDB.NET.Data;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Statistics;
using Decohere.Tests.Analyses.Fitting;

namespace Decohere.Tests.IO;

/// <summary>Reading the three data shapes from CSV and Parquet, and every bad-data case with its message (row and column named).</summary>
public class DataReaderTests
{
    internal static readonly Decohere.Scenarios.Scenario Scenario = SyntheticData.SingleMode(50, 10, 1.3, 0.05);

    private static async Task<FitData> ReadCsv(string text, DataOptions? options = null)
    {
        string path = Path.Combine(Path.GetTempPath(), $"decohere-data-{Guid.NewGuid():N}.csv");
        await File.WriteAllTextAsync(path, text);
        try { return await FitDataReader.ReadAsync(path, Scenario, options); }
        finally { File.Delete(path); }
    }

    [Fact]
    public async Task ShotsAreReducedToUnbiasedSampleCovariances()
    {
        var data = await ReadCsv("delay_s,i,q\n0.01,1,2\n0.01,3,1\n0.01,2,6\n0,1,1\n0,-1,0\n0,2,-3\n");
        Assert.Equal(DataShape.Shots, data.Shape);
        Assert.Equal([0.0, 0.01], data.Delays.Select(d => d.DelayS));
        var d = data.Delays[1];
        // Sample covariance with N − 1: i = (1, 3, 2) → var 1; q = (2, 1, 6) → var 7; cov = (−1·−1 + 1·−2 + 0·3)/2 = −0.5.
        Assert.Equal(3, d.Shots);
        Assert.Equal(1, d.VarI, 12);
        Assert.Equal(7, d.VarQ, 12);
        Assert.Equal(-0.5, d.CovIQ!.Value, 12);
        Assert.Equal("line 2", d.Row);
    }

    [Fact]
    public async Task ColumnsAndDelayUnitsAreMappable()
    {
        var options = DataOptions.Parse(["delay_s=t_ms", "occupancy=n", "occupancy_err=dn"], "ms");
        var data = await ReadCsv("t_ms,n,dn\n2,10,0.5\n40,41,0.7\n", options);
        Assert.Equal(DataShape.Occupancies, data.Shape);
        Assert.Equal(0.040, data.Delays[1].DelayS, 15);
        Assert.Equal(0.7, data.Delays[1].OccupancyError);
    }

    [Fact]
    public async Task ParquetWrittenByAnIndependentWriterReadsLikeTheCsv()
    {
        // DuckDB (an independent Parquet writer) writes the variances shape; the reader must give the same data as from CSV.
        string csv = "delay_s,var_i,var_q,cov_iq,shots\n0.001,3.5,3.25,0.125,1000\n0.02,30.5,29.75,-0.5,2000\n";
        string parquet = Path.Combine(Path.GetTempPath(), $"decohere-data-{Guid.NewGuid():N}.parquet");
        try
        {
            using (var connection = new DuckDBConnection("DataSource=:memory:"))
            {
                connection.Open();
                using var command = connection.CreateCommand();
                command.CommandText = "COPY (SELECT * FROM (VALUES (0.001::DOUBLE, 3.5::DOUBLE, 3.25::DOUBLE, 0.125::DOUBLE, 1000::BIGINT), " +
                    $"(0.02, 30.5, 29.75, -0.5, 2000)) t(delay_s, var_i, var_q, cov_iq, shots)) TO '{parquet}' (FORMAT PARQUET)";
                command.ExecuteNonQuery();
            }
            var fromParquet = await FitDataReader.ReadAsync(parquet, Scenario);
            var fromCsv = await ReadCsv(csv);
            Assert.Equal(DataShape.Variances, fromParquet.Shape);
            Assert.Equal(fromCsv.Delays.Select(d => (d.DelayS, d.VarI, d.VarQ, d.CovIQ, d.Shots)), fromParquet.Delays.Select(d => (d.DelayS, d.VarI, d.VarQ, d.CovIQ, d.Shots)));
            Assert.Equal("row 2", fromParquet.Delays[1].Row);
        }
        finally
        {
            File.Delete(parquet);
        }
    }

    [Theory]
    [InlineData("delay_s,var_i,var_q\n0,1,1\n", "missing column shots", "variances")]
    [InlineData("t,i,q\n0,1,1\n", "missing column delay_s", "column mapping")]
    [InlineData("delay_s,i,q\n0,1,1\n0,abc,2\n", "line 3, column i", "'abc' is not a number")]
    [InlineData("delay_s,i,q\n0,1,1\n0,NaN,2\n", "line 3, column i", "not a finite number")]
    [InlineData("delay_s,i,q\n0,1,1\n0,Infinity,2\n", "line 3, column i", "not a finite number")]
    [InlineData("delay_s,i,q\n0,1,1\n0,,2\n", "line 3, column i", "missing")]
    [InlineData("delay_s,var_i,var_q,shots\n0,1.5,-0.2,100\n", "line 2, column var_q", "negative variance")]
    [InlineData("delay_s,var_i,var_q,shots\n0,1.5,1.2,1\n", "line 2, column shots", "≥ 2")]
    [InlineData("delay_s,var_i,var_q,shots\n0,1.5,1.2,10.5\n", "line 2, column shots", "whole number")]
    [InlineData("delay_s,i,q\n0,1,1\n0,2,3\n0,0,5\n0.01,1,1\n", "line 5, column delay_s", "only one shot")]
    [InlineData("delay_s,i,q\n0,1,1\n0,2,3\n0,0,5\n0.01,1,1\n0.01,2,1\n", "line 5, column delay_s", "at least three shots")]
    [InlineData("delay_s,i,q\n0,1,1\n0,1,1\n0,1,1\n", "line 2, columns i, q", "singular")]
    [InlineData("delay_s,var_i,var_q,shots\n0.2,1.5,1.2,100\n", "line 2, column delay_s", "outside the scenario")]
    [InlineData("delay_s,var_i,var_q,shots\n-0.001,1.5,1.2,100\n", "line 2, column delay_s", "outside the scenario")]
    [InlineData("delay_s,occupancy,occupancy_err\n0,3,0\n", "line 2, column occupancy_err", "must be > 0")]
    [InlineData("delay_s,var_i,var_q,cov_iq,shots\n0,1,1,2,100\n", "line 2, column cov_iq", "positive-definite")]
    [InlineData("delay_s,i,q\n0,1,1\n0,2\n", "line 3", "2 fields")]
    public async Task BadDataIsRefusedWithRowAndColumn(string csv, string where, string what)
    {
        var e = await Assert.ThrowsAsync<InputException>(() => ReadCsv(csv));
        Assert.Contains(where, e.Message);
        Assert.Contains(what, e.Message);
    }

    [Fact]
    public async Task MappedColumnsAreNamedWithTheirMeaning()
    {
        var e = await Assert.ThrowsAsync<InputException>(() => ReadCsv("t_ms,var_i,var_q,shots\n900,1,1,10\n", DataOptions.Parse(["delay_s=t_ms"], "ms")));
        Assert.Contains("column t_ms (as delay_s)", e.Message);
    }

    [Theory]
    [InlineData("delay=t", "unknown column 'delay'")]
    [InlineData("delay_s", "expected NAME=FILE_COLUMN")]
    public void BadColumnMappingsAreRefused(string mapping, string message) =>
        Assert.Contains(message, Assert.Throws<InputException>(() => DataOptions.Parse([mapping], null)).Message);

    [Fact]
    public void UnknownDelayUnitIsRefused() =>
        Assert.Contains("delay unit", Assert.Throws<InputException>(() => DataOptions.Parse([], "fortnight")).Message);
}

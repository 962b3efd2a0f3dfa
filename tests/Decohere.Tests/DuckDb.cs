using DuckDB.NET.Data;

namespace Decohere.Tests;

/// <summary>DuckDB, an independent Parquet implementation, as the reader our output files are checked with.</summary>
internal static class DuckDb
{
    /// <summary>Runs a query in an in-memory database; database NULL becomes null.</summary>
    public static List<object?[]> Query(string sql)
    {
        using var connection = new DuckDBConnection("DataSource=:memory:");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        using var reader = command.ExecuteReader();
        var rows = new List<object?[]>();
        while (reader.Read())
        {
            var row = new object?[reader.FieldCount];
            for (int i = 0; i < row.Length; i++) row[i] = reader.IsDBNull(i) ? null : reader.GetValue(i);
            rows.Add(row);
        }
        return rows;
    }

    /// <summary>A file path as an SQL string literal.</summary>
    public static string Literal(string path) => "'" + path.Replace("'", "''") + "'";
}

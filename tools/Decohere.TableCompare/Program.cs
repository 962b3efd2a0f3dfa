using DuckDB.NET.Data;

// Usage: Decohere.TableCompare A.parquet B.parquet
// Exit 0 when both files hold the same columns (names and types) and the same rows, in any order, compared as
// exact values; 1 with the differing rows printed otherwise; 2 for bad arguments.
if (args.Length != 2 || !File.Exists(args[0]) || !File.Exists(args[1]))
{
    Console.Error.WriteLine("usage: Decohere.TableCompare A.parquet B.parquet (both files must exist)");
    return 2;
}

using var connection = new DuckDBConnection("DataSource=:memory:");
connection.Open();
string a = Literal(args[0]), b = Literal(args[1]);

var schemaA = Rows($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet({a}))");
var schemaB = Rows($"SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM read_parquet({b}))");
if (!schemaA.SequenceEqual(schemaB))
{
    Console.Error.WriteLine($"columns differ:\n  {args[0]}: {string.Join(", ", schemaA)}\n  {args[1]}: {string.Join(", ", schemaB)}");
    return 1;
}
long countA = (long)Scalar($"SELECT count(*) FROM read_parquet({a})"), countB = (long)Scalar($"SELECT count(*) FROM read_parquet({b})");
// EXCEPT ALL keeps duplicates, so equal multisets of rows give two empty differences.
var onlyA = Rows($"SELECT * FROM read_parquet({a}) EXCEPT ALL SELECT * FROM read_parquet({b}) LIMIT 5");
var onlyB = Rows($"SELECT * FROM read_parquet({b}) EXCEPT ALL SELECT * FROM read_parquet({a}) LIMIT 5");
if (countA != countB || onlyA.Count > 0 || onlyB.Count > 0)
{
    Console.Error.WriteLine($"{args[0]}: {countA} rows, {args[1]}: {countB} rows");
    foreach (var row in onlyA) Console.Error.WriteLine($"  only in the first: {row}");
    foreach (var row in onlyB) Console.Error.WriteLine($"  only in the second: {row}");
    return 1;
}
Console.WriteLine($"same table: {countA} rows × {schemaA.Count} columns");
return 0;

List<string> Rows(string sql)
{
    using var command = connection.CreateCommand();
    command.CommandText = sql;
    using var reader = command.ExecuteReader();
    var rows = new List<string>();
    while (reader.Read())
        rows.Add(string.Join(" | ", Enumerable.Range(0, reader.FieldCount).Select(i => reader.IsDBNull(i) ? "null" : Convert.ToString(reader.GetValue(i), System.Globalization.CultureInfo.InvariantCulture))));
    return rows;
}

object Scalar(string sql)
{
    using var command = connection.CreateCommand();
    command.CommandText = sql;
    return command.ExecuteScalar()!;
}

static string Literal(string path) => "'" + Path.GetFullPath(path).Replace("'", "''") + "'";

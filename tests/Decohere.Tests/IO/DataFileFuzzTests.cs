using Decohere.Core;
using Decohere.IO;

namespace Decohere.Tests.IO;

/// <summary>
/// Seeded byte damage to Parquet data files, our own and DuckDB's: reading one must give a table or an
/// <see cref="InputException"/> naming the file, never another exception type (and never a crash of the native reader).
/// </summary>
public class DataFileFuzzTests
{
    private const int Seed = 4242;
    private const int Cases = 300;

    [Fact]
    public async Task DamagedParquetFilesAreReadOrRefusedAsInput()
    {
        string dir = TestPaths.NewTempDirectory();
        string duck = Path.Combine(dir, "duck.parquet"), plain = Path.Combine(dir, "plain.parquet");
        DuckDb.Query($"COPY (SELECT i * 1e-4 AS delay_s, i % 7 + 0.5 AS i, i % 5 - 0.25 AS q, 'drum' AS mode FROM range(0, 3000) t(i)) TO {DuckDb.Literal(duck)} (FORMAT parquet, ROW_GROUP_SIZE 1000)");
        DuckDb.Query($"COPY (SELECT i * 1e-4 AS delay_s, (i % 7 + 0.5)::DOUBLE AS var_i, 2.0 AS var_q, 100 AS shots FROM range(0, 300) t(i)) TO {DuckDb.Literal(plain)} (FORMAT parquet, COMPRESSION uncompressed)");
        byte[][] originals = [File.ReadAllBytes(duck), File.ReadAllBytes(plain)];
        int read = 0, refused = 0;
        for (int k = 0; k < Cases; k++)
        {
            var random = new Random(Seed + k);
            byte[] bytes = (byte[])originals[k % 2].Clone();
            int flips = 1 + random.Next(8);
            for (int f = 0; f < flips; f++)
            {
                // Half the damage lands in the footer (the last few hundred bytes), where the schema and offsets live.
                int at = random.Next(2) == 0 ? bytes.Length - 1 - random.Next(Math.Min(400, bytes.Length)) : random.Next(bytes.Length);
                bytes[at] = (byte)random.Next(256);
            }
            if (random.Next(10) == 0) bytes = [.. bytes.Take(random.Next(8, bytes.Length)), .. "PAR1"u8.ToArray()];
            string path = Path.Combine(dir, $"case-{k}.parquet");
            File.WriteAllBytes(path, bytes);
            try
            {
                var table = await DataTable.LoadAsync(path);
                foreach (var column in table.ColumnNames)
                    try { table.Numbers(column, column); } catch (InputException) { }
                read++;
            }
            catch (InputException e)
            {
                Assert.Contains($"case-{k}.parquet", e.Message);
                refused++;
            }
            catch (Exception e)
            {
                Assert.Fail($"case {k}: {e.GetType().Name}: {e.Message}");
            }
        }
        Assert.True(refused > Cases / 10, $"{refused} refused, {read} read: the damage must often be fatal to test the refusal");
    }
}

using System.CommandLine;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using Decohere.Cli.Commands;
using CliApp = Decohere.Cli.Commands.Cli;

namespace Decohere.Tests.Reports;

/// <summary>
/// Every number the commands write is finite or null: no NaN, ±Infinity or huge stand-in in any JSON file, no NaN or ±inf
/// in any double column of any Parquet file (read with DuckDB, an independent reader), for the demo and every example.
/// </summary>
public class FiniteOutputTests
{
    private static readonly AppConsole Quiet = AppConsole.Capture(TextWriter.Null, TextWriter.Null);

    private static RootCommand Root()
    {
        var root = new RootCommand("test");
        foreach (var c in new[]
        {
            RunCommand.Create(Quiet), LifetimeCommand.Create(Quiet), ToleranceCommand.Create(Quiet), FitCommand.Create(Quiet),
            FitNoiseCommand.Create(Quiet), SweepCommand.Create(Quiet),
        })
            root.Subcommands.Add(c);
        return root;
    }

    private static async Task Ok(params string[] args) => Assert.Equal(CliApp.Ok, await CliApp.InvokeAsync(Root(), args, Quiet));

    [Fact]
    public async Task TheDemoAndEveryExampleWriteOnlyFiniteNumbersOrNull()
    {
        string dir = TestPaths.NewTempDirectory();
        try
        {
            var scenarios = Directory.GetFiles(Path.Combine(TestPaths.RepositoryRoot, "scenarios"), "*.yaml").Order().ToList();
            // Few shots and much added noise: the var_min interval reaches 0, so squeezing in dB has an undefined end.
            string noisy = Path.Combine(dir, "noisy.yaml");
            await File.WriteAllTextAsync(noisy, Decohere.Scenarios.ScenarioLoader.DemoText
                .Replace("name: demo-drum", "name: noisy").Replace("shots: 2000 ", "shots: 20 ").Replace("added_noise: 1.3 ", "added_noise: 6 "));
            scenarios.Add(noisy);
            foreach (string s in scenarios)
            {
                string name = Path.GetFileNameWithoutExtension(s), o = Path.Combine(dir, name);
                await Ok("run", s, "--out", o, "--trajectories", "4", "-q");
                await Ok("lifetime", s, "--out", o, "-q");
                await Ok("tolerance", s, "--added-noise", "0:8:5", "--shots", "100,100000", "--delay", "1ms", "--calibration-uncertainty", "0.1",
                    "--draws", "200", "--out", o, "-q");
            }
            string demo = scenarios.Single(s => s.EndsWith("demo.yaml", StringComparison.Ordinal)), d = Path.Combine(dir, "demo");
            await Ok("fit", demo, "--data", Path.Combine(d, "shots.parquet"), "--starts", "1", "--no-profiles", "--out", d, "-q");
            string calibration = Path.Combine(dir, "calibration.csv");
            await File.WriteAllTextAsync(calibration, "occupancy,var_i,var_q,shots\n0,3.1,3.0,5000\n1,7.2,6.9,5000\n2,10.8,11.1,5000\n");
            await Ok("fit-noise", "--data", calibration, "--out", d, "-q");
            await Ok("sweep", demo, "--vary", "modes.drum.bath.temperature=5mK:50mK:3", "--metrics",
                "steady_squeezing_db,physical_lifetime,observable_lifetime,end_squeezing_db", "--out", Path.Combine(dir, "sweep"), "-q");

            var json = Directory.GetFiles(dir, "*.json", SearchOption.AllDirectories);
            Assert.True(json.Length >= 3 * scenarios.Count + 2, $"only {json.Length} JSON files");
            foreach (string f in json)
            {
                string text = await File.ReadAllTextAsync(f);
                Assert.DoesNotMatch(new Regex(@"\bNaN\b|Infinity"), text);
                AssertFinite(JsonNode.Parse(text), f);
            }
            // The noisy run's undefined squeezing end is null with its reason beside it.
            string summary = await File.ReadAllTextAsync(Path.Combine(dir, "noisy", "summary.json"));
            Assert.Contains("\"high\": null", summary);
            Assert.Contains("\"high_reason\":", summary);

            var parquet = Directory.GetFiles(dir, "*.parquet", SearchOption.AllDirectories);
            Assert.Contains(parquet, p => p.EndsWith("estimates.parquet", StringComparison.Ordinal));
            foreach (string f in parquet)
            {
                var doubles = DuckDb.Query($"SELECT column_name FROM (DESCRIBE SELECT * FROM {DuckDb.Literal(f)}) WHERE column_type = 'DOUBLE'")
                    .Select(r => (string)r[0]!).ToArray();
                if (doubles.Length == 0) continue;
                string bad = string.Join(" + ", doubles.Select(c => $"count(*) FILTER (WHERE isnan(\"{c}\") OR isinf(\"{c}\"))"));
                long count = Convert.ToInt64(DuckDb.Query($"SELECT {bad} FROM {DuckDb.Literal(f)}")[0][0]);
                Assert.True(count == 0, $"{f}: {count} NaN or infinite values");
            }
            Assert.Single(DuckDb.Query($"SELECT 1 FROM {DuckDb.Literal(Path.Combine(dir, "noisy", "estimates.parquet"))} WHERE squeezing_db_high IS NULL LIMIT 1"));
        }
        finally { Directory.Delete(dir, recursive: true); }
    }

    private static void AssertFinite(JsonNode? node, string file)
    {
        switch (node)
        {
            case JsonObject o:
                foreach (var (_, v) in o) AssertFinite(v, file);
                break;
            case JsonArray a:
                foreach (var v in a) AssertFinite(v, file);
                break;
            case JsonValue v when v.TryGetValue(out double d):
                // No stand-in for ∞ either (1e300, double.MaxValue).
                Assert.True(double.IsFinite(d) && Math.Abs(d) < 1e300, $"{file}: {d}");
                break;
        }
    }
}

using System.CommandLine;
using System.Text.Json.Nodes;
using Decohere.Cli.Commands;
using Decohere.Tests.Analyses.Fitting;

using CliApp = Decohere.Cli.Commands.Cli;
using DuckDB.NET.Data;

namespace Decohere.Tests.Cli;

/// <summary>The fit and fit-noise commands end to end on small CSV files.</summary>
public class FitCommandTests
{
    private static readonly AppConsole Console = AppConsole.Capture(TextWriter.Null, TextWriter.Null);

    private static RootCommand Root()
    {
        var root = new RootCommand("test");
        root.Subcommands.Add(FitCommand.Create(Console));
        root.Subcommands.Add(FitNoiseCommand.Create(Console));
        return root;
    }

    private static string TempDir()
    {
        string dir = Path.Combine(Path.GetTempPath(), $"decohere-fit-{Guid.NewGuid():N}");
        Directory.CreateDirectory(dir);
        return dir;
    }

    [Fact]
    public async Task FitWritesJsonParquetAndPlot()
    {
        string dir = TempDir();
        try
        {
            var truth = SyntheticData.SingleMode(50, 10, 1.3, 0.05);
            double[] delays = [0, 0.005, 0.01, 0.02, 0.03, 0.04];
            var data = SyntheticData.Variances(truth, delays, 3000, 21);
            // The same device in milliseconds and renamed columns, to exercise the mappings.
            string csv = SyntheticData.VariancesCsv(data).Replace("delay_s,var_i", "t_ms,var_i");
            csv = string.Join('\n', csv.Split('\n').Select((l, k) => k == 0 || l.Length == 0 ? l : (double.Parse(l.Split(',')[0], System.Globalization.CultureInfo.InvariantCulture) * 1e3).ToString("R", System.Globalization.CultureInfo.InvariantCulture) + l[l.IndexOf(',')..]));
            string csvPath = Path.Combine(dir, "variances.csv");
            await File.WriteAllTextAsync(csvPath, csv);
            string yaml = Path.Combine(dir, "drum.yaml");
            await File.WriteAllTextAsync(yaml, truth.SourceText.Replace("occupancy: 50", "occupancy: 30"));
            string outDir = Path.Combine(dir, "out");
            int code = await CliApp.InvokeAsync(Root(), ["fit", yaml, "--data", csvPath, "--column", "delay_s=t_ms", "--delay-unit", "ms",
                "--free", "modes.drum.bath.occupancy,modes.drum.linewidth", "--prior", "modes.drum.linewidth=1 Hz..100 Hz", "--out", outDir, "--quiet"], Console);
            Assert.Equal(CliApp.Ok, code);
            var json = JsonNode.Parse(await File.ReadAllTextAsync(Path.Combine(outDir, "fit.json")))!;
            // The prior the likelihood included is recorded as given (SI units); no calibration was used.
            var prior = Assert.Single(json["priors"]!.AsArray())!;
            Assert.Equal("modes.drum.linewidth", prior["path"]!.GetValue<string>());
            Assert.Equal("bounded", prior["kind"]!.GetValue<string>());
            Assert.Equal((1.0, 100.0), (prior["low"]!.GetValue<double>(), prior["high"]!.GetValue<double>()));
            Assert.Null(json["calibration"]);
            var n = json["parameters"]!["modes.drum.bath.occupancy"]!;
            double value = n["value"]!.GetValue<double>(), low = n["ci_low"]!.GetValue<double>(), high = n["ci_high"]!.GetValue<double>();
            Assert.True(low < value && value < high);
            Assert.True(Math.Abs(value - 50) < 5 * n["stderr"]!.GetValue<double>(), $"occupancy {value}");
            Assert.NotNull(json["derived"]!["bath_temperature_k"]!["ci_low"]);
            Assert.NotNull(json["derived"]!["thermal_decoherence_rate_per_s"]);
            Assert.Equal(2, json["correlation"]!["matrix"]!.AsArray().Count);
            Assert.Equal(18 - 2, json["goodness_of_fit"]!["degrees_of_freedom"]!.GetValue<int>());
            Assert.Equal(truth.SourceHash.Length, json["scenario_sha256"]!.GetValue<string>().Length);
            Assert.True(new FileInfo(Path.Combine(outDir, "fit.png")).Length > 10_000);
            // The results table for notebooks and papers: the same value to four significant digits, with its unit, and
            // LaTeX that needs nothing beyond booktabs (plain ASCII, balanced math shifts).
            string md = await File.ReadAllTextAsync(Path.Combine(outDir, "fit.md"));
            Assert.Contains($"| bath occupancy n_th of drum | {value.ToString("G4", System.Globalization.CultureInfo.InvariantCulture)} | [", md);
            string tex = await File.ReadAllTextAsync(Path.Combine(outDir, "fit.tex"));
            Assert.Contains("\\begin{tabular}", tex);
            Assert.All(tex, c => Assert.True(c < 128, $"non-ASCII '{c}' in fit.tex"));
            Assert.Equal(0, tex.Count(c => c == '$') % 2);

            // fit.parquet read back by DuckDB (an independent Parquet reader): one row per delay.
            using var connection = new DuckDBConnection("DataSource=:memory:");
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = $"SELECT count(*), max(delay_s), count(*) FILTER (WHERE var_i_model_low <= var_i_model AND var_i_model <= var_i_model_high AND (delay_s = 0 OR var_i_model_low < var_i_model_high)) FROM '{Path.Combine(outDir, "fit.parquet")}'";
            using var reader = command.ExecuteReader();
            Assert.True(reader.Read());
            Assert.Equal(6L, reader.GetInt64(0));
            Assert.Equal(0.04, reader.GetDouble(1), 12);
            Assert.Equal(6L, reader.GetInt64(2));
        }
        finally
        {
            Directory.Delete(dir, recursive: true);
        }
    }

    [Fact]
    public async Task BadDataExitsWithTheInputCode()
    {
        string dir = TempDir();
        try
        {
            var truth = SyntheticData.SingleMode(50, 10, 1.3, 0.05);
            string yaml = Path.Combine(dir, "drum.yaml");
            await File.WriteAllTextAsync(yaml, truth.SourceText);
            string csv = Path.Combine(dir, "bad.csv");
            await File.WriteAllTextAsync(csv, "delay_s,var_i,var_q,shots\n0,1,-1,10\n");
            Assert.Equal(CliApp.BadInput, await CliApp.InvokeAsync(Root(), ["fit", yaml, "--data", csv, "--out", dir, "--quiet"], Console));
            Assert.False(File.Exists(Path.Combine(dir, "fit.json")));
            // A fixed parameter needs its uncertainty; a bound is a prior, not a fixed value.
            string good = Path.Combine(dir, "good.csv");
            await File.WriteAllTextAsync(good, SyntheticData.VariancesCsv(SyntheticData.Variances(truth, [0.01, 0.02, 0.03], 500, 4)));
            var error = new StringWriter();
            var capture = AppConsole.Capture(TextWriter.Null, error);
            Assert.Equal(CliApp.BadInput, await CliApp.InvokeAsync(new RootCommand("test") { FitCommand.Create(capture) },
                ["fit", yaml, "--data", good, "--fixed", "modes.drum.linewidth=5Hz..20Hz", "--out", dir, "--quiet"], capture));
            Assert.Contains("--fixed: modes.drum.linewidth", error.ToString());
            Assert.False(File.Exists(Path.Combine(dir, "fit.json")));
        }
        finally
        {
            Directory.Delete(dir, recursive: true);
        }
    }

    [Fact]
    public async Task FitNoiseWritesTheCalibration()
    {
        string dir = TempDir();
        try
        {
            // Exact variances on var = 2·(n + ½) + 1: the fit must return gain 2 and added noise 1.
            string csv = Path.Combine(dir, "cal.csv");
            await File.WriteAllTextAsync(csv, "occupancy,var_i,var_q,shots\n0,2,2,500\n1,4,4,500\n4,10,10,500\n9,20,20,500\n");
            Assert.Equal(CliApp.Ok, await CliApp.InvokeAsync(Root(), ["fit-noise", "--data", csv, "--out", dir, "--quiet"], Console));
            var json = JsonNode.Parse(await File.ReadAllTextAsync(Path.Combine(dir, "fit-noise.json")))!;
            Assert.Equal(2, json["parameters"]!["gain"]!["value"]!.GetValue<double>(), 1e-6);
            Assert.Equal(1, json["parameters"]!["added_noise"]!["value"]!.GetValue<double>(), 1e-6);
            Assert.Equal(0.5, json["derived"]!["added_noise_input_referred"]!["value"]!.GetValue<double>(), 1e-6);
        }
        finally
        {
            Directory.Delete(dir, recursive: true);
        }
    }
}

using Decohere.Tests.Reports;
using System.Diagnostics;
using System.Text;
using Decohere.Analyses.Check;
using Decohere.Analyses.Runs;
using Decohere.Core;
using Decohere.Engine;
using Decohere.Numerics;
using Decohere.Scenarios;
using Xunit.Abstractions;

namespace Decohere.Tests.Scenarios;

/// <summary>
/// Seeded mutations of the example scenarios through the loader and the checks of <c>decohere check</c>: every case must
/// end in a valid scenario or a refusal with a message (<see cref="ScenarioException"/>, <see cref="InputException"/>,
/// <see cref="UnstableDynamicsException"/>); any other exception, or a case that does not finish, fails the test.
/// </summary>
public class ScenarioFuzzTests(ITestOutputHelper output)
{
    private const int Seed = 20261202;
    private const int Cases = 1000;

    // Values that broke or nearly broke the loader or the engine, and the boundaries next to them.
    private static readonly string[] Hostile =
    [
        "1e308", "-1e308", "1e308 kHz", "1e-320", "0", "-0", "-1", "nan", ".nan", ".inf", "-.inf", "1e12", "1e20", "2e7",
        "3000000000", "2147483648", "1e300", "٤ MHz", "４ kHz", "1_000", "0x10", "1,5", "\"\"", "~", "null", "[]", "{}",
        "[1, 2]", "{ a: 1 }", "? [x]\n  : 1", "\"../../x\"", "/etc/x", "\"a\\u0000b\"", "true", "ground", "thermal", "steady",
        "squeezed", "blue", "red", "cavity", "mechanical", "effective", "5 kHz", "5 ms", "5 mK", "5 dB", "90 deg", "1 us",
        "*alias", "&anchor 1", "!!binary AAAA", "!custom 3", "'unterminated", "\"unterminated", "[", "{", "]", "}", ":", "- ",
        "1e999", "-1e-999", "1 MHz MHz", "1e3e3", "+.5", ".5.", "1.", ".", "+", "-", "e5",
    ];

    private static readonly string[] Keys =
    [
        "name", "model", "sideband_corrections", "modes", "couplings", "initial", "stages", "readout", "jitter", "output", "seed",
        "kind", "frequency", "linewidth", "quality_factor", "bath", "temperature", "occupancy", "state", "squeezing_db", "angle",
        "x", "p", "duration", "tones", "cavity", "sideband", "coupling", "g0", "photons", "cooperativity", "detuning", "mode",
        "added_noise", "shots", "stage", "delays", "method", "detector_noise", "step", "rate",
    ];

    [Fact]
    public async Task MutatedExamplesEndInAScenarioOrARefusal()
    {
        var sources = Directory.GetFiles(Path.Combine(TestPaths.RepositoryRoot, "scenarios"), "*.yaml").Order(StringComparer.Ordinal)
            .Select(File.ReadAllText).ToArray();
        Assert.True(sources.Length >= 4);
        var outcomes = new Dictionary<string, int>();
        var clock = Stopwatch.StartNew();
        for (int k = 0; k < Cases; k++)
        {
            var random = new Random(Seed + k);
            string source = sources[random.Next(sources.Length)];
            var (text, mutations) = Mutate(source, sources, random);
            var run = Task.Run(() => Check(text));
            if (await Task.WhenAny(run, Task.Delay(TimeSpan.FromSeconds(20))) != run)
                Assert.Fail($"case {k} ({mutations}) did not finish in 20 s:\n{Excerpt(text)}");
            var result = await run;
            if (result.Failure is { } failure)
                Assert.Fail($"case {k} ({mutations}) ended in {failure.GetType().Name}: {failure.Message}\n{failure.StackTrace}\n---\n{Excerpt(text)}");
            outcomes[result.Outcome] = outcomes.GetValueOrDefault(result.Outcome) + 1;
        }
        output.WriteLine($"{Cases} cases in {clock.Elapsed.TotalSeconds:F1} s: {string.Join(", ", outcomes.OrderBy(o => o.Key).Select(o => $"{o.Key} {o.Value}"))}");
        // A mutator that only ever breaks the file, or never does, tests one path; both must be well represented.
        Assert.True(outcomes.GetValueOrDefault("valid") >= Cases / 20, "too few mutations leave a valid scenario");
        Assert.True(outcomes.GetValueOrDefault("refused by the loader") >= Cases / 4, "too few mutations are refused");
    }

    [Fact]
    public async Task MutatedExamplesThatLoadRunToTheEndOrAreRefused()
    {
        // The whole of `run` (covariances, shots, estimates, trajectories, summary, plots) on the mutations that load,
        // kept small: at most 300 shots per delay and 200 output times; the 40-mode chain is left to the test above.
        var sources = Directory.GetFiles(Path.Combine(TestPaths.RepositoryRoot, "scenarios"), "*.yaml").Where(f => !f.Contains("chain"))
            .Order(StringComparer.Ordinal).Select(File.ReadAllText).ToArray();
        int ran = 0, refused = 0;
        for (int k = 0; k < RunCases; k++)
        {
            var random = new Random(Seed + 1_000_000 + k);
            var (text, mutations) = Mutate(sources[random.Next(sources.Length)], sources, random);
            Scenario scenario;
            try { scenario = ScenarioLoader.Parse(text, "fuzz.yaml"); }
            catch (ScenarioException) { continue; }
            if (scenario.Readout is { } readout) scenario = scenario with { Readout = readout with { Shots = Math.Min(readout.Shots, 300) } };
            scenario = scenario with { OutputStepS = Math.Max(scenario.OutputStepS, scenario.TotalDurationS / 200) };
            try
            {
                await WriteThrough.RunAsync(scenario, TestPaths.NewTempDirectory(), new RunSettings(Trajectories: 3));
                ran++;
            }
            catch (Exception e) when (e is InputException or UnstableDynamicsException)
            {
                refused++;
            }
            catch (Exception e)
            {
                Assert.Fail($"case {k} ({mutations}) ended in {e.GetType().Name}: {e.Message}\n{e.StackTrace}\n---\n{Excerpt(text)}");
            }
        }
        output.WriteLine($"{RunCases} cases: {ran} ran, {refused} refused by the engine, the rest refused by the loader");
        Assert.True(ran >= RunCases / 20, $"only {ran} mutations ran");
    }

    private const int RunCases = 400;

    private sealed record Result(string Outcome, Exception? Failure = null);

    private static Result Check(string text)
    {
        try
        {
            var scenario = ScenarioLoader.Parse(text, "fuzz.yaml");
            var dynamics = Dynamics.Solve(scenario);
            ScenarioReport.Of(dynamics);
            return new Result("valid");
        }
        catch (ScenarioException e)
        {
            Assert.NotEmpty(e.Problems);
            Assert.All(e.Problems, p => Assert.False(string.IsNullOrWhiteSpace(p.Message)));
            return new Result("refused by the loader");
        }
        catch (Exception e) when (e is InputException or UnstableDynamicsException)
        {
            Assert.False(string.IsNullOrWhiteSpace(e.Message));
            return new Result("refused by the checks");
        }
        catch (Exception e)
        {
            return new Result("failure", e);
        }
    }

    private static (string Text, string Description) Mutate(string source, string[] sources, Random random)
    {
        var lines = source.Split('\n').ToList();
        var applied = new List<string>();
        int count = 1 + random.Next(3);
        for (int m = 0; m < count && lines.Count > 0; m++)
        {
            int at = random.Next(lines.Count);
            switch (random.Next(10))
            {
                case 0 or 1 or 2:
                {
                    // Replace the value after the first "key:" on a line (or an item's value in a flow mapping).
                    string line = lines[at];
                    var colons = Enumerable.Range(0, line.Length).Where(i => line[i] == ':').ToArray();
                    if (colons.Length == 0) goto case 3;
                    int colon = colons[random.Next(colons.Length)];
                    int end = line.IndexOfAny([',', '}', '#'], colon + 1);
                    string value = Hostile[random.Next(Hostile.Length)];
                    lines[at] = line[..(colon + 1)] + " " + value + (end < 0 ? "" : line[end..]);
                    applied.Add($"value '{value}' on line {at + 1}");
                    break;
                }
                case 3:
                    lines.RemoveAt(at);
                    applied.Add($"delete line {at + 1}");
                    break;
                case 4:
                    lines.Insert(at, lines[random.Next(lines.Count)]);
                    applied.Add($"duplicate a line at {at + 1}");
                    break;
                case 5:
                {
                    var other = sources[random.Next(sources.Length)].Split('\n');
                    lines.Insert(at, other[random.Next(other.Length)]);
                    applied.Add($"foreign line at {at + 1}");
                    break;
                }
                case 6:
                {
                    string key = Keys[random.Next(Keys.Length)];
                    string line = lines[at];
                    int colon = line.IndexOf(':');
                    int start = line.Length - line.TrimStart(' ', '-').Length;
                    if (colon > start) lines[at] = line[..start] + key + line[colon..];
                    applied.Add($"key '{key}' on line {at + 1}");
                    break;
                }
                case 7:
                {
                    int shift = random.Next(-4, 5);
                    lines[at] = shift >= 0 ? new string(' ', shift) + lines[at] : lines[at].TrimStart().PadLeft(Math.Max(0, lines[at].Length + shift));
                    applied.Add($"indent line {at + 1} by {shift}");
                    break;
                }
                case 8:
                {
                    // Characters YAML and the number parser treat specially.
                    const string specials = "[]{}:,-?&*!|>'\"%@`#\t\0\u00a0\u200b\u0663\ufeff\r";
                    var builder = new StringBuilder(lines[at]);
                    builder.Insert(random.Next(builder.Length + 1), specials[random.Next(specials.Length)]);
                    lines[at] = builder.ToString();
                    applied.Add($"special character on line {at + 1}");
                    break;
                }
                default:
                {
                    int depth = random.Next(2) == 0 ? 70 : 5000;
                    string line = lines[at];
                    int colon = line.IndexOf(':');
                    if (colon < 0) goto case 3;
                    lines[at] = line[..(colon + 1)] + " " + new string('[', depth) + "1" + new string(']', depth);
                    applied.Add($"nest {depth} levels on line {at + 1}");
                    break;
                }
            }
        }
        string text = string.Join('\n', lines);
        if (random.Next(12) == 0)
        {
            int cut = random.Next(text.Length + 1);
            text = text[..cut];
            applied.Add($"truncate at {cut}");
        }
        return (text, string.Join("; ", applied));
    }

    private static string Excerpt(string text) => text.Length <= 4000 ? text : text[..4000] + "\n...";
}

using MathNet.Numerics.LinearAlgebra;
using Decohere.Model;
using Decohere.Scenarios;

namespace Decohere.Tests.Model;

public class StageModelsTests
{
    private static Scenario Example(string file) => ScenarioLoader.Load(Path.Combine(TestPaths.RepositoryRoot, "scenarios", file));

    private static Scenario With(Scenario s, params (string Path, double Value)[] changes) =>
        changes.Aggregate(s, (x, c) => ParameterPath.Parse(c.Path, x).Set(x, c.Value));

    public static TheoryData<string, string, double> Changes => new()
    {
        // Full model: baths and tone couplings take the fast path.
        { "demo.yaml", "modes.drum.bath.temperature", 0.04 },
        { "demo.yaml", "stages.squeeze.tones[1].coupling", 7e3 },
        { "demo.yaml", "modes.lc.bath.occupancy", 0.3 },
        { "demo.yaml", "modes.drum.frequency", 3e6 },
        // A cavity whose heating law follows the tone's cooperativity.
        { "drum-cooling.yaml", "stages.cool.tones[0].coupling", 20e3 },
        // A stage override hides the mode's own bath in one stage.
        { "two-drums.yaml", "modes.line.bath.occupancy", 0.2 },
        // Static couplings between the sites of a lattice.
        { "ssh-chain.yaml", "modes.drum_0.bath.temperature", 0.03 },
        // Everything else is built again: a decay rate, a detuning, the effective model.
        { "demo.yaml", "modes.drum.linewidth", 0.3 },
        { "two-drums.yaml", "stages.entangle.detuning.twin-a", 500 },
        { "cooling-limit.yaml", "modes.membrane.bath.temperature", 2 },
        { "cooling-limit.yaml", "stages.cool.tones[0].coupling", 5e4 },
    };

    [Theory]
    [MemberData(nameof(Changes))]
    public void ModelsOfACopyAreThoseOfANewBuildBitForBit(string file, string path, double value)
    {
        // The reference is the general path, ModelBuilder.Build (its physics is checked in QuadraticSystemTests against
        // hand-worked cases and a Fock-space master equation); the fast path must not move a single bit, or sweep
        // tables would change with it. Two changes at once as well as one.
        var template = Example(file);
        var models = new StageModels(template);
        var copy = With(template, (path, value));
        var twice = file == "demo.yaml" ? With(copy, ("stages.squeeze.tones[0].coupling", 21e3)) : copy;
        foreach (var s in new[] { copy, twice })
            for (int i = 0; i < s.Stages.Length; i++)
            {
                var built = ModelBuilder.Build(s, s.Stages[i]);
                var fast = models.For(s, i);
                AssertBits(built.Drift, fast.Drift);
                AssertBits(built.Diffusion, fast.Diffusion);
                Assert.Equal(built.ModeNames.ToArray(), fast.ModeNames.ToArray());
            }
    }

    [Fact]
    public void StagesACopySharesKeepTheTemplatesModel()
    {
        var template = ScenarioLoader.Demo();
        var models = new StageModels(template);
        var copy = With(template, ("stages.squeeze.tones[1].coupling", 12e3));
        Assert.Same(models.Template(0), models.For(copy, 0));
        Assert.NotSame(models.Template(1), models.For(copy, 1));
        Assert.Same(models.Template(2), models.For(copy, 2));
        // A transient excess leaves the settled baths, and so the models, as they were.
        var heating = Example("readout-heating.yaml");
        var heatingModels = new StageModels(heating);
        Assert.Same(heatingModels.Template(1), heatingModels.For(With(heating, ("modes.tramp.bath.excess", 90)), 1));
    }

    [Fact]
    public void FastPathEntriesFollowTheMap()
    {
        // Damping γ into n_th gives D = γ(n_th + ½) on the mode's block (PHYSICS.md, worked by hand from Serafini's map),
        // n_th from Bose–Einstein with the exact SI h and k_B (CODATA 2018). Red tone G₋(a†b + ab†) and blue tone
        // G₊(a†b† + ab) give 𝐇 blocks G₋·I + G₊·diag(1, −1), so A = Ω𝐇 has A[x_drum, p_lc] = G₋ − G₊ and
        // A[p_drum, x_lc] = −(G₋ + G₊) (angular rates; common practice for the linearised two-tone Hamiltonian).
        const double h = 6.62607015e-34, kB = 1.380649e-23;
        var template = ScenarioLoader.Demo();
        var models = new StageModels(template);
        double t = 0.04, gPlus = 2 * Math.PI * 7e3, gMinus = 2 * Math.PI * 25e3, gamma = 2 * Math.PI * 0.15;
        var model = models.For(With(template, ("modes.drum.bath.temperature", t), ("stages.squeeze.tones[1].coupling", 7e3)), 1);
        double nth = 1 / (Math.Exp(h * 4.1e6 / (kB * t)) - 1);
        Assert.Equal(gamma * (nth + 0.5), model.Diffusion[0, 0], gamma * (nth + 0.5) * 1e-12);
        Assert.Equal(gamma * (nth + 0.5), model.Diffusion[1, 1], gamma * (nth + 0.5) * 1e-12);
        Assert.Equal(gMinus - gPlus, model.Drift[0, 3], gMinus * 1e-12);
        Assert.Equal(-(gMinus + gPlus), model.Drift[1, 2], gMinus * 1e-12);
    }

    private static void AssertBits(Matrix<double> expected, Matrix<double> actual)
    {
        Assert.Equal(expected.RowCount, actual.RowCount);
        for (int i = 0; i < expected.RowCount; i++)
            for (int j = 0; j < expected.ColumnCount; j++)
                Assert.True(BitConverter.DoubleToInt64Bits(expected[i, j]) == BitConverter.DoubleToInt64Bits(actual[i, j]),
                    $"entry ({i}, {j}): {expected[i, j]:R} built, {actual[i, j]:R} updated");
    }
}

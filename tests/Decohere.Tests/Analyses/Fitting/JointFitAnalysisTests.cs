using System.Collections.Immutable;
using MathNet.Numerics.Distributions;
using Decohere.Analyses.Cooling;
using Decohere.Analyses.Fitting;
using Decohere.Analyses.Fitting.Joint;
using Decohere.Analyses.Ringdown;
using Decohere.Core;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>
/// The joint fit against closed forms and against the single-data-set analyses: a heating curve and a ring-down sharing the
/// damping recover it with calibrated intervals narrower than either alone; a parameter the second data set does not see
/// comes out exactly as <c>fit</c> finds it from the first alone.
/// </summary>
public sealed class JointFitAnalysisTests
{
    private const double NBath = 40, LinewidthHz = 10, N0 = 0.5;
    private static readonly double Gamma = 2 * Math.PI * LinewidthHz;

    // A drum released from a thermal state of 0.5 quanta (effective model), then a stage with a red cooling tone whose cavity
    // warms as a·C^b: the first stage gives the heating curve, the second the cooling curve.
    private static readonly Scenario Device = ScenarioLoader.Parse("""
        name: joint-test
        model: effective
        modes:
          drum: { kind: mechanical, frequency: 5 MHz, linewidth: 10 Hz, bath: { occupancy: 40 } }
          resonator:
            kind: cavity
            frequency: 6 GHz
            linewidth: 200 kHz
            bath: { occupancy: 0.05, heating: { coefficient: 1e-4, exponent: 1 } }
        initial:
          drum: { state: thermal, occupancy: 0.5 }
        stages:
          - { name: release, duration: 46 ms }
          - name: cool
            duration: 1 ms
            tones: [{ cavity: resonator, mechanical: drum, sideband: red, cooperativity: 100 }]
        readout: { mode: drum, added_noise: 1, shots: 1000, stage: release, delays: [0 ms] }
        """, "joint-test.yaml");

    /// <summary>
    /// Occupancies of the released drum with Gaussian errors of 1 quantum about the single-mode relaxation
    /// n(t) = n_th + (n₀ − n_th)e^{−γt} (the covariance relaxes as V(t) = e^{−γt}V(0) + (1 − e^{−γt})(n_th + ½)I; A. Serafini,
    /// Quantum Continuous Variables, CRC Press 2017, ch. 6).
    /// </summary>
    private static FitData Heating(Random random)
    {
        var delays = Enumerable.Range(0, 19).Select(k => 2.5e-3 * k);
        return new FitData(DataShape.Occupancies, [.. delays.Select((t, k) =>
        {
            double n = NBath + (N0 - NBath) * Math.Exp(-Gamma * t);
            return new DelayObservation(t, 0, double.NaN, double.NaN, null, 0, 0, n + Normal.Sample(random, 0, 1), 1, $"row {k + 2}");
        })], "heating");
    }

    /// <summary>Amplitudes A(t) = √(A₀²e^{−γt} + A_th²) with Gaussian noise σ = 0.2, A₀ = 10, A_th = 1 (the ring-down model of the free energy decay).</summary>
    private static RingdownData Ringdown(Random random)
    {
        double[] t = [.. Enumerable.Range(0, 60).Select(k => 1e-3 * k)];
        return new RingdownData("ringdown", RingdownKind.Amplitude, [.. t],
            [.. t.Select(x => Math.Sqrt(100 * Math.Exp(-Gamma * x) + 1) + Normal.Sample(random, 0, 0.2))], [.. t.Select(_ => 0.2)]);
    }

    private static ParameterPath PathOf(string text) => ParameterPath.Parse(text, Device);

    private static JointParameter Parameter(string name, Dimension dimension, double start, ParameterDomain domain, params string[] sets) =>
        new(name, dimension, start, domain, null, [.. sets], [.. sets.Select(s => $"{s}: {name}")]);

    /// <summary>Heating curve (n_bath, gamma) and ring-down (gamma, initial, floor): gamma is shared.</summary>
    private static JointFitProblem SharedDamping(FitData heating, RingdownData ringdown)
    {
        var starts = RingdownAnalysis.Parameters(ringdown);
        ImmutableArray<JointParameter> parameters =
        [
            Parameter("gamma", Dimension.Frequency, 8, ParameterDomain.Positive, "heating", "ringdown"),
            Parameter("n_bath", Dimension.Dimensionless, 30, ParameterDomain.NonNegative, "heating"),
            Parameter("ringdown.initial", Dimension.Dimensionless, starts[0].Start, ParameterDomain.Positive, "ringdown"),
            Parameter("ringdown.floor", Dimension.Dimensionless, starts[2].Start, ParameterDomain.NonNegative, "ringdown"),
        ];
        ImmutableArray<IJointTerm> terms =
        [
            new DelayTerm("heating", Device, heating, [(PathOf("modes.drum.linewidth"), 0), (PathOf("modes.drum.bath.occupancy"), 1)]),
            new RingdownTerm("ringdown", ringdown, [0, 2, 3]),
        ];
        return new JointFitProblem("shared-damping", "test", "", parameters, terms, [], []);
    }

    private static readonly JointFitSettings Quick = new() { Starts = 1, Parallel = false, ProfileOnly = ["gamma"] };

    [Fact]
    public void SharedDampingIsRecoveredWithCalibratedIntervalsOverFortySeeds()
    {
        const int seeds = 40;
        var results = new (double Value, double Se, double Low, double High)[seeds];
        Parallel.For(0, seeds, seed =>
        {
            var random = new Random(1000 + seed);
            var fit = JointFitAnalysis.Solve(SharedDamping(Heating(random), Ringdown(random)), Quick);
            var g = fit.Parameters[0].Estimate;
            results[seed] = (g.Value, g.StandardError, g.Low, g.High);
        });
        // 95% profile intervals: misses ~ Binomial(40, 0.05), mean 2; P(misses ≥ 7) ≈ 0.003, so 6 is the most allowed.
        int misses = results.Count(r => !(r.Low <= LinewidthHz && LinewidthHz <= r.High));
        Assert.InRange(misses, 0, 6);
        // The standardised errors have mean 0 and unit spread: their mean within 3σ/√40 of 0, their rms within 0.6–1.5.
        var z = results.Select(r => (r.Value - LinewidthHz) / r.Se).ToArray();
        Assert.InRange(z.Average(), -3 / Math.Sqrt(seeds), 3 / Math.Sqrt(seeds));
        Assert.InRange(Math.Sqrt(z.Average(v => v * v)), 0.6, 1.5);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    public void TheSharedDampingIsNarrowerThanEitherDataSetGivesAlone(int seed)
    {
        var random = new Random(seed);
        var heating = Heating(random);
        var ringdown = Ringdown(random);
        var joint = JointFitAnalysis.Solve(SharedDamping(heating, ringdown), Quick).Parameters[0].Estimate;
        // Alone: the ring-down's own analysis, and fit on the heating curve with the damping and bath free.
        var alone = RingdownAnalysis.Solve(ringdown).LinewidthHz;
        var fit = FitAnalysis.Solve(Device, new FitSettings { Free = ["modes.drum.linewidth", "modes.drum.bath.occupancy"], Starts = 1 }, heating)
            .Parameters.Single(p => p.Name == "modes.drum.linewidth");
        double width = joint.High - joint.Low;
        Assert.True(width < alone.High!.Value - alone.Low!.Value, $"joint {width:G4} Hz against the ring-down alone {alone.High - alone.Low:G4} Hz");
        Assert.True(width < fit.High - fit.Low, $"joint {width:G4} Hz against the heating curve alone {fit.High - fit.Low:G4} Hz");
        // Independent likelihoods add their information: 1/w² ≈ 1/w₁² + 1/w₂² for nearly Gaussian profiles, within 20%.
        double combined = 1 / Math.Sqrt(Math.Pow(alone.High!.Value - alone.Low!.Value, -2) + Math.Pow(fit.High - fit.Low, -2));
        Assert.InRange(width / combined, 0.8, 1.2);
    }

    [Fact]
    public void ADataSetItsModelDoesNotDescribeIsNamedAndTheOthersAreNot()
    {
        var random = new Random(3);
        // The heating curve's errors stated four times too small: its deviance is about 16× its degrees of freedom.
        var heating = Heating(random);
        heating = heating with { Delays = [.. heating.Delays.Select(d => d with { OccupancyError = 0.25 })] };
        var fit = JointFitAnalysis.Solve(SharedDamping(heating, Ringdown(random)), Quick with { Profiles = false });
        Assert.Contains(fit.Warnings, w => w.Contains("data set 'heating' is not described well"));
        Assert.DoesNotContain(fit.Warnings, w => w.Contains("data set 'ringdown'"));
        // The ring-down's own deviance stays a χ² of its degrees of freedom (60 − 2 own − ½ shared = 57.5), within 4σ = 4√(2·57.5).
        var ringdown = fit.DataSets.Single(s => s.Name == "ringdown");
        Assert.Equal(57.5, ringdown.DegreesOfFreedom, 12);
        Assert.InRange(ringdown.Deviance, 57.5 - 4 * Math.Sqrt(115), 57.5 + 4 * Math.Sqrt(115));
    }

    /// <summary>
    /// Steady occupancies against cooperativity in the effective model with one red tone at the lower sideband and no
    /// off-resonant rates: n = (γn_th + A₋n_c)/(γ + A₋), A₋ = Cγ, so n = (n_th + C·n_c)/(1 + C) with n_c = 0.05 + 1e-4·C
    /// (F. Marquardt et al., Phys. Rev. Lett. 99, 093902 (2007)); Gaussian errors of 5%.
    /// </summary>
    private static ImmutableArray<CoolingPoint> Cooling(Random random) =>
    [
        .. Enumerable.Range(0, 10).Select(k => Math.Pow(10, 0.5 * k)).Select(c =>
        {
            double n = (NBath + c * (0.05 + 1e-4 * c)) / (1 + c);
            return new CoolingPoint(c, n + Normal.Sample(random, 0, 0.05 * n), 0.05 * n);
        }),
    ];

    [Fact]
    public void AParameterTheOtherDataSetDoesNotSeeComesOutAsFitFindsItFromItsOwnDataSet()
    {
        var random = new Random(7);
        var heating = Heating(random);
        var cooling = Cooling(random);
        // The damping is shared, but this cooling curve does not depend on it (n above has no γ); the cooling curve has its own bath.
        ImmutableArray<JointParameter> parameters =
        [
            Parameter("gamma", Dimension.Frequency, 8, ParameterDomain.Positive, "heating", "cooling"),
            Parameter("n_bath", Dimension.Dimensionless, 30, ParameterDomain.NonNegative, "heating"),
            Parameter("n_bath_cooling", Dimension.Dimensionless, 30, ParameterDomain.NonNegative, "cooling"),
            Parameter("a", Dimension.Dimensionless, 2e-4, ParameterDomain.Positive, "cooling"),
            Parameter("b", Dimension.Dimensionless, 0.8, ParameterDomain.Positive, "cooling"),
        ];
        var (stage, tone) = CoolingAnalysis.Locate(Device, new CoolingSettings());
        ImmutableArray<IJointTerm> terms =
        [
            new DelayTerm("heating", Device, heating, [(PathOf("modes.drum.linewidth"), 0), (PathOf("modes.drum.bath.occupancy"), 1)]),
            new CoolingTerm("cooling", "cooling", Device, stage, tone, cooling, [(PathOf("modes.drum.linewidth"), 0), (PathOf("modes.drum.bath.occupancy"), 2)], [3, 4]),
        ];
        var joint = JointFitAnalysis.Solve(new JointFitProblem("independent", "test", "", parameters, terms, [], []),
            new JointFitSettings { Starts = 2, ProfileOnly = ["gamma", "n_bath"] });
        var alone = FitAnalysis.Solve(Device, new FitSettings { Free = ["modes.drum.linewidth", "modes.drum.bath.occupancy"], Starts = 2 }, heating);
        foreach (var (name, path) in new[] { ("gamma", "modes.drum.linewidth"), ("n_bath", "modes.drum.bath.occupancy") })
        {
            var a = joint.Parameters.Single(p => p.Parameter.Name == name).Estimate;
            var b = alone.Parameters.Single(p => p.Name == path);
            Assert.Equal(b.Value, a.Value, b.Value * 1e-4);
            // Profile intervals are found by root finding on the profile to about 1e-3 of their width.
            Assert.Equal(b.Low, a.Low, 2e-3 * (b.High - b.Low));
            Assert.Equal(b.High, a.High, 2e-3 * (b.High - b.Low));
        }
        // The cooling curve's own parameters are those it was drawn with, within 4σ.
        var nc = joint.Parameters.Single(p => p.Parameter.Name == "n_bath_cooling").Estimate;
        Assert.InRange(NBath, nc.Value - 4 * nc.StandardError, nc.Value + 4 * nc.StandardError);
    }

    [Fact]
    public async Task ACalibratedDataSetAloneGivesWhatFitWithTheSameCalibrationGives()
    {
        // The example's heating curve in measured units (gain 2.5 per quantum), with a calibration of gain 2.5 ± 0.05 and
        // added noise 5 ± 0.3 quanta: the joint fit of this one data set and fit --calibration must agree, both carrying the
        // gain's uncertainty by refits at gain ± σ.
        string dir = TestPaths.NewTempDirectory();
        string example = Path.Combine(TestPaths.RepositoryRoot, "scenarios", "joint");
        File.Copy(Path.Combine(example, "device.yaml"), Path.Combine(dir, "device.yaml"));
        var lines = File.ReadAllLines(Path.Combine(example, "heating.csv"));
        string I(double v) => v.ToString("R", System.Globalization.CultureInfo.InvariantCulture);
        File.WriteAllLines(Path.Combine(dir, "measured.csv"), [lines[0], .. lines.Skip(1).Select(l => l.Split(',')).Select(f =>
            string.Join(',', f[0], I(2.5 * double.Parse(f[1], System.Globalization.CultureInfo.InvariantCulture)),
                I(2.5 * double.Parse(f[2], System.Globalization.CultureInfo.InvariantCulture)), I(2.5 * double.Parse(f[3], System.Globalization.CultureInfo.InvariantCulture)), f[4]))]);
        File.WriteAllText(Path.Combine(dir, "fit-noise.json"), """
            { "parameters": { "gain": { "value": 2.5, "stderr": 0.05 } }, "derived": { "added_noise_input_referred": { "value": 5, "stderr": 0.3 } } }
            """);
        File.WriteAllText(Path.Combine(dir, "fit.yaml"), """
            parameters: { n_bath: { start: 30 }, gamma: { start: 8 Hz }, n_add: { start: 4 } }
            data:
              heating:
                kind: delays
                file: measured.csv
                scenario: device.yaml
                calibration: fit-noise.json
                set: { modes.drum.bath.occupancy: n_bath, modes.drum.linewidth: gamma, readout.added_noise: n_add }
            """);
        var problem = await JointFitLoader.LoadAsync(Path.Combine(dir, "fit.yaml"));
        var joint = JointFitAnalysis.Solve(problem, new JointFitSettings { Starts = 2 });
        var scenario = ScenarioLoader.Load(Path.Combine(dir, "device.yaml"));
        var data = await Decohere.IO.FitDataReader.ReadAsync(Path.Combine(dir, "measured.csv"), scenario);
        var fit = FitAnalysis.Solve(scenario, new FitSettings
        {
            Free = ["modes.drum.bath.occupancy", "modes.drum.linewidth", "readout.added_noise"],
            Calibration = Decohere.IO.CalibrationFile.Read(Path.Combine(dir, "fit-noise.json")),
            Starts = 2,
        }, data);
        for (int k = 0; k < 3; k++)
        {
            var a = joint.Parameters[k].Estimate;
            var b = fit.Parameters[k];
            Assert.Equal("profile+gain", a.Method);
            Assert.Equal(b.Value, a.Value, b.Value * 1e-4);
            Assert.Equal(b.StandardError, a.StandardError, b.StandardError * 0.02);
            Assert.Equal(b.Low, a.Low, 2e-3 * (b.High - b.Low));
            Assert.Equal(b.High, a.High, 2e-3 * (b.High - b.Low));
        }
        Directory.Delete(dir, true);
    }
}

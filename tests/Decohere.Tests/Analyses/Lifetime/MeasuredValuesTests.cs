using Decohere.Analyses.Lifetime;
using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Tests.Analyses.Lifetime;

/// <summary>Planning with values measured by earlier fits: applied to the scenario, their errors carried into the lifetimes.</summary>
public class MeasuredValuesTests
{
    /// <summary>
    /// After release the demo's drum decays alone, so its lifetime follows the single-mode law
    /// t* = (1/γ) ln[(n + ½ − V₀)/(n + ½ − V_thr)] (the damped oscillator's variance relaxing to its bath, common practice).
    /// With n and γ measured as n ± σ_n and γ ± σ_γ with error correlation ρ, first-order propagation (JCGM 100:2008, eq. 13)
    /// gives sd² = a² + b² + 2ρab, a and b the changes of t* per +1σ. We allow 2% (one-sided differences at 1σ against the
    /// exact change) and require the physical lifetime to follow the law to 1e-3 first.
    /// </summary>
    [Theory]
    [InlineData(0.0)]
    [InlineData(0.8)]
    [InlineData(-0.8)]
    public void LifetimeSpreadIsTheCorrelatedPropagationOfTheSingleModeLaw(double rho)
    {
        var demo = ScenarioLoader.Demo();
        double n = 70, sn = 6, linewidth = 0.16, sl = 0.01;
        var values = MeasuredValues.From(
            [new MeasuredValue("modes.drum.bath.occupancy", n, sn, "test"), new MeasuredValue("modes.drum.linewidth", linewidth, sl, "test")],
            new[,] { { 1, rho }, { rho, 1 } });
        var scenario = values.Apply(demo);
        var result = LifetimeAnalysis.Solve(scenario, new LifetimeSettings { Measured = values });
        var c = result.Core;
        Assert.Equal(1, c.Ratio!.Value, 1e-3);

        double v0 = c.InitialVarMin, vt = c.ThresholdVariance;
        double T(double nth, double lw) => Math.Log((nth + 0.5 - v0) / (nth + 0.5 - vt)) / (2 * Math.PI * lw);
        double a = T(n + sn, linewidth) - T(n, linewidth), b = T(n, linewidth + sl) - T(n, linewidth);
        double expected = Math.Sqrt(a * a + b * b + 2 * rho * a * b);
        Assert.Equal(expected, result.PhysicalLifetimeSd!.Value, 0.02 * expected);
        Assert.NotNull(result.ObservableLifetimeSd);
    }

    [Fact]
    public void FitJsonValuesAndCorrelationsAreReadByPath()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "fit.json");
        File.WriteAllText(path, """
            { "parameters": { "modes.drum.bath.occupancy": { "value": 70, "stderr": 6 }, "modes.drum.linewidth": { "value": 0.16, "stderr": null } },
              "correlation": { "parameters": ["modes.drum.linewidth", "modes.drum.bath.occupancy"], "matrix": [[1, -0.5], [-0.5, 1]] } }
            """);
        var values = FitResultFile.Read(path);
        Assert.Equal(["modes.drum.bath.occupancy", "modes.drum.linewidth"], values.Values.Select(v => v.Path));
        Assert.Equal((70.0, 6.0), (values.Values[0].Value, values.Values[0].Sd));
        Assert.True(double.IsNaN(values.Values[1].Sd));
        Assert.Equal(-0.5, values.Correlation(0, 1));
        var applied = values.Apply(ScenarioLoader.Demo());
        Assert.Equal(0.16, applied.ModeNamed("drum").LinewidthHz);

        // Two sources may not give the same parameter; a path the scenario lacks is named with its source.
        Assert.Contains("given by both", Assert.Throws<InputException>(() => values.And(values)).Message);
        var stray = MeasuredValues.From([new MeasuredValue("modes.membrane.linewidth", 1, 0.1, "other.json")]);
        Assert.Contains("other.json", Assert.Throws<InputException>(() => stray.Apply(ScenarioLoader.Demo())).Message);
        Assert.Throws<InputException>(() => FitResultFile.Read(path + ".missing"));
    }

    [Fact]
    public void JointFitValuesTakeTheErrorsOfTheParametersTheyWereSetFrom()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "joint-fit.json");
        File.WriteAllText(path, """
            { "parameters": { "gamma": { "value": 9.9, "stderr": 0.1 }, "n_a": { "value": 40, "stderr": 2 }, "n_b": { "value": 44, "stderr": 3 } },
              "correlation": { "parameters": ["gamma", "n_a", "n_b"], "matrix": [[1, 0.3, 0], [0.3, 1, 0], [0, 0, 1]] },
              "data_sets": {
                "heating": { "set": { "modes.drum.linewidth": "gamma", "modes.drum.bath.occupancy": "n_a" },
                             "scenario_values": { "modes.drum.linewidth": { "value": 9.9 }, "modes.drum.bath.occupancy": { "value": 40 } } },
                "ringdown": { "set": { "linewidth": "gamma" } },
                "cooling": { "set": { "modes.drum.linewidth": "gamma", "modes.drum.bath.occupancy": "n_b" },
                             "scenario_values": { "modes.drum.linewidth": { "value": 9.9 }, "modes.drum.bath.occupancy": { "value": 44 } } } } }
            """);
        // Two data sets fit the bath with different parameters: the file alone is ambiguous, a data set is not.
        Assert.Contains(":SET", Assert.Throws<InputException>(() => FitResultFile.Read(path)).Message);
        var heating = FitResultFile.Read(path + ":heating");
        Assert.Equal(["modes.drum.linewidth", "modes.drum.bath.occupancy"], heating.Values.Select(v => v.Path));
        Assert.Equal([0.1, 2.0], heating.Values.Select(v => v.Sd));
        Assert.Equal(0.3, heating.Correlation(0, 1));
        Assert.Equal(3.0, FitResultFile.Read(path + ":cooling").Values[1].Sd);
        Assert.Contains("data sets: heating, ringdown, cooling", Assert.Throws<InputException>(() => FitResultFile.Read(path + ":ringdown")).Message);
    }
}

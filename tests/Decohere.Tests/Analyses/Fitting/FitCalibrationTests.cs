using System.Text.Json.Nodes;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Fitting;

public class FitCalibrationTests
{
    private const double Gain = 2.5e-3, Nth = 50, AddedNoise = 1.3;
    private static readonly double[] Delays = [0.01, 0.02, 0.03, 0.04, 0.05];

    // Variances in measured units: the quanta variances times the gain (a Wishart scatter matrix scales linearly).
    private static FitData Measured(int seed)
    {
        var quanta = SyntheticData.Variances(SyntheticData.SingleMode(Nth, 10, AddedNoise, 0.05), Delays, 4000, seed);
        return quanta with { Delays = [.. quanta.Delays.Select(d => d with { VarI = d.VarI * Gain, VarQ = d.VarQ * Gain, CovIQ = d.CovIQ * Gain })] };
    }

    private static string WriteCalibration(double gainSd, double noiseSd)
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "fit-noise.json");
        File.WriteAllText(path, new JsonObject
        {
            ["parameters"] = new JsonObject { ["gain"] = new JsonObject { ["value"] = Gain, ["stderr"] = gainSd } },
            ["derived"] = new JsonObject { ["added_noise_input_referred"] = new JsonObject { ["value"] = AddedNoise, ["stderr"] = noiseSd } },
        }.ToJsonString());
        return path;
    }

    /// <summary>
    /// With an exact gain the calibrated fit of measured data equals the fit of the same data in quanta with the added-noise
    /// prior (the conversion is a change of units); the truth lies within 4 standard errors.
    /// </summary>
    [Fact]
    public void AnExactGainIsAChangeOfUnits()
    {
        var scenario = SyntheticData.SingleMode(20, 10, 0.7, 0.05);
        var data = Measured(21);
        var settings = new FitSettings { Free = ["modes.drum.bath.occupancy"], Profiles = false, Parallel = false };
        var calibrated = FitAnalysis.Solve(scenario, settings with { Calibration = CalibrationFile.Read(WriteCalibration(0, 0.05)) }, data).Parameters[0];
        var direct = FitAnalysis.Solve(scenario, settings with { Priors = [new FitPrior("readout.added_noise", AddedNoise, 0.05, null, null)] },
            FitCalibration.ToQuanta(data, Gain)).Parameters[0];
        Assert.Equal(direct.Value, calibrated.Value, 1e-6 * direct.Value);
        Assert.True(Math.Abs(calibrated.Value - Nth) < 4 * calibrated.StandardError, $"{calibrated.Value} ± {calibrated.StandardError}");
    }

    /// <summary>
    /// A 5% gain error: late variances are (1 + ε)(n + ½ + n_add) in quanta, so the occupancy shifts by about ε(n + ½ + n_add)
    /// (first-order propagation of uncertainty, JCGM 100:2008 sec. 5.1); the reported error must be that shift added in
    /// quadrature to the statistical one, within 25% (the early delays, where the state has not yet reached the bath, weigh less).
    /// </summary>
    [Fact]
    public void TheGainUncertaintyIsCarriedIntoTheErrors()
    {
        var scenario = SyntheticData.SingleMode(20, 10, 0.7, 0.05);
        var data = Measured(22);
        var settings = new FitSettings { Free = ["modes.drum.bath.occupancy"], Profiles = false, Parallel = false };
        var exact = FitAnalysis.Solve(scenario, settings with { Calibration = CalibrationFile.Read(WriteCalibration(0, 0.05)) }, data).Parameters[0];
        var uncertain = FitAnalysis.Solve(scenario, settings with { Calibration = CalibrationFile.Read(WriteCalibration(0.05 * Gain, 0.05)) }, data);
        double shift = 0.05 * (exact.Value + 0.5 + AddedNoise);
        double expected = Math.Sqrt(exact.StandardError * exact.StandardError + shift * shift);
        Assert.Equal(expected, uncertain.Parameters[0].StandardError, 0.25 * expected);
        Assert.EndsWith("+gain", uncertain.Parameters[0].Method);
        // The result records the calibration and the added-noise prior it brought, for fit.json.
        Assert.Equal(0.05 * Gain, uncertain.Calibration!.GainSd, 12);
        Assert.Equal("readout.added_noise", Assert.Single(uncertain.Priors).Path);
    }

    [Fact]
    public void AFileWithoutAGainIsRefusedByName()
    {
        string path = Path.Combine(TestPaths.NewTempDirectory(), "fit-noise.json");
        File.WriteAllText(path, "{\"parameters\": {}}");
        var e = Assert.Throws<InputException>(() => CalibrationFile.Read(path));
        Assert.Contains("parameters.gain.value", e.Message);
    }
}

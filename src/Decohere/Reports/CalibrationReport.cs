using System.Text.Json.Nodes;
using Decohere.Analyses.Calibration;
using Decohere.Core;

namespace Decohere.Reports;

/// <summary>Writes a noise calibration's fit-noise.json (gain, added noise and the input-referred added noise with intervals) and fit-noise.png/.svg.</summary>
public sealed class CalibrationReport : IReport<CalibrationResult>
{
    /// <inheritdoc/>
    public Task<IReadOnlyList<string>> WriteAsync(CalibrationResult result, string directory, CancellationToken cancel = default)
    {
        cancel.ThrowIfCancellationRequested();
        Directory.CreateDirectory(directory);
        string path = Path.Combine(directory, "fit-noise.json");
        var json = Json(result);
        if (result.Expected is { } expected)
        {
            var readout = ReadoutSummary.Chain(expected);
            readout["within_interval"] = result.AddedNoiseInputReferred.Low <= expected.AddedNoise && expected.AddedNoise <= result.AddedNoiseInputReferred.High;
            json["scenario_readout"] = readout;
        }
        SummaryJson.Write(json, path);
        cancel.ThrowIfCancellationRequested();
        return Task.FromResult<IReadOnlyList<string>>([path, .. CalibrationPlot.Save(result, Path.Combine(directory, "fit-noise"))]);
    }

    /// <summary>The content of fit-noise.json.</summary>
    public static JsonObject Json(CalibrationResult r) => new()
    {
        ["data"] = new JsonObject { ["file"] = r.Source, ["points"] = r.Points.Length, ["shots"] = r.Points.Sum(p => p.Shots) },
        ["model"] = "var = gain·(occupancy + 1/2) + added_noise for var_i and var_q; chi-square likelihood with shots − 1 degrees of freedom per variance",
        ["confidence"] = r.Confidence,
        ["parameters"] = new JsonObject
        {
            ["gain"] = FitReport.EstimateJson(r.Gain, "measured variance units per quantum"),
            ["added_noise"] = FitReport.EstimateJson(r.AddedNoise, "measured variance units"),
        },
        ["derived"] = new JsonObject { ["added_noise_input_referred"] = FitReport.EstimateJson(r.AddedNoiseInputReferred, "quanta") },
        ["correlation"] = SummaryJson.Number(r.Correlation),
        ["goodness_of_fit"] = FitReport.GoodnessJson(r.Goodness),
        ["version"] = Provenance.Version,
        ["warnings"] = SummaryJson.Strings(r.Warnings),
    };
}

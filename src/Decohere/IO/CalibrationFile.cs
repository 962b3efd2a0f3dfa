using System.Text.Json.Nodes;
using Decohere.Analyses.Fitting;
using Decohere.Core;

namespace Decohere.IO;

/// <summary>Reads the calibration a <c>fit-noise</c> run wrote (fit-noise.json) for a fit.</summary>
public static class CalibrationFile
{
    /// <summary>Gain and input-referred added noise with their standard errors.</summary>
    /// <exception cref="InputException">The file is missing, not JSON, or lacks a finite positive gain and added noise with standard errors.</exception>
    public static FitCalibration Read(string path)
    {
        string name = Path.GetFileName(path);
        var root = JsonInput.Read(path, "calibration");
        double Value(string where, JsonNode? node, string field, bool positive)
        {
            double? v = null;
            try { v = (double?)node?[field]; } catch (Exception e) when (e is InvalidOperationException or FormatException) { }
            if (v is not { } x || !double.IsFinite(x) || (positive ? x <= 0 : x < 0))
                throw new InputException($"calibration {name}: {where}.{field} must be a finite {(positive ? "positive" : "non-negative")} number (a fit-noise.json written by decohere fit-noise)");
            return x;
        }
        var gain = root?["parameters"]?["gain"];
        var noise = root?["derived"]?["added_noise_input_referred"];
        return new FitCalibration(name, Value("parameters.gain", gain, "value", true), Value("parameters.gain", gain, "stderr", false),
            Value("derived.added_noise_input_referred", noise, "value", false), Value("derived.added_noise_input_referred", noise, "stderr", true));
    }
}

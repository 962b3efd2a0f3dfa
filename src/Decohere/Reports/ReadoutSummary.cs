using System.Text.Json.Nodes;
using Decohere.Model.Readouts;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>The sampled readout as summary.json reports it.</summary>
public static class ReadoutSummary
{
    /// <summary>
    /// The readout model as every JSON output reports it: mode, method, the added noise referred to the mode (quanta per
    /// quadrature), the whole chain's gain, and each element's contribution.
    /// </summary>
    public static JsonObject Chain(IReadoutChain chain)
    {
        var json = new JsonObject
        {
            ["mode"] = chain.Mode,
            ["method"] = chain.Method,
            ["added_noise"] = SummaryJson.Number(chain.AddedNoise),
            ["gain"] = SummaryJson.Number(chain.Gain),
            ["contributions"] = new JsonArray(chain.Contributions.Select(c => (JsonNode)new JsonObject
            {
                ["element"] = c.Element, ["description"] = c.Description, ["gain"] = SummaryJson.Number(c.Gain),
                ["noise"] = SummaryJson.Number(c.Noise), ["input_referred"] = SummaryJson.Number(c.InputReferred),
            }).ToArray()),
        };
        if (chain is AmplificationReadout a)
            json["amplification"] = new JsonObject
            {
                ["cavity"] = a.Cavity, ["pulse_gain"] = SummaryJson.Number(a.PulseGain), ["pulse_added_noise"] = SummaryJson.Number(a.PulseAddedNoise),
            };
        return json;
    }

    /// <summary>The <c>readout</c> block of summary.json: method, added noise (and the amplification's gain), shots, seed, per-delay estimates.</summary>
    public static JsonObject Build(ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, SamplerSettings settings)
    {
        var json = Chain(sampler.Chain);
        json["shots_per_delay"] = sampler.ShotsPerDelay;
        json["seed"] = sampler.Scenario.Seed;
        json["block_shots"] = settings.BlockShots;
        json["confidence"] = settings.Confidence;
        json["jitter"] = !sampler.Scenario.Jitter.IsNone;
        var delays = new JsonArray();
        for (int k = 0; k < estimates.Count; k++)
        {
            var e = estimates[k];
            var row = new JsonObject { ["delay_s"] = sampler.Delays[k].DelayS, ["time_s"] = sampler.Delays[k].TimeS, ["shots"] = e.Shots };
            var values = EstimatesTable.Row(e);
            for (int q = 0; q < values.Length; q++)
                row[EstimatesTable.Quantities[q]] = EstimateJson(values[q], e);
            row["uncertainty_violated"] = e.ViolatesUncertainty;
            delays.Add((JsonNode)row);
        }
        json["estimates"] = delays;
        return json;
    }

    /// <summary>
    /// One estimate as <c>value, low, high, model, z</c>, each null with a <c>_reason</c> where undefined: only squeezing in dB
    /// can be, as 10·log10(½/var_min) has no value for var_min ≤ 0 (more noise subtracted than measured, or an interval
    /// end that reaches 0: no upper bound on the squeezing).
    /// </summary>
    private static JsonObject EstimateJson(Estimate v, ReadoutEstimate e)
    {
        var o = new JsonObject();
        var min = e.VarMin;
        SummaryJson.Set(o, "value", v.Value, $"the inferred var_min = {min.Value:G4} is not positive: the added noise subtracted exceeds the measured variance");
        SummaryJson.Set(o, "low", v.Low, $"the var_min interval lies at or below 0 (its high end {min.High:G4}): no lower bound on the squeezing");
        SummaryJson.Set(o, "high", v.High, $"the var_min interval reaches {min.Low:G4} ≤ 0: no upper bound on the squeezing");
        SummaryJson.Set(o, "model", v.Model, "no model prediction");
        SummaryJson.Set(o, "z", v.Z, "no finite estimate to compare with the model");
        return o;
    }
}

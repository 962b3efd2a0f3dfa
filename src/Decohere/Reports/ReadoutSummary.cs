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
                row[EstimatesTable.Quantities[q]] = new JsonObject
                {
                    ["value"] = SummaryJson.Number(values[q].Value), ["low"] = SummaryJson.Number(values[q].Low),
                    ["high"] = SummaryJson.Number(values[q].High), ["model"] = SummaryJson.Number(values[q].Model),
                    ["z"] = SummaryJson.Number(values[q].Z),
                };
            delays.Add((JsonNode)row);
        }
        json["estimates"] = delays;
        return json;
    }
}

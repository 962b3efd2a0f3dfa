using System.Text.Json.Nodes;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>The sampled readout as summary.json reports it.</summary>
public static class ReadoutSummary
{
    /// <summary>The <c>readout</c> block of summary.json: method, added noise (and the amplification's gain), shots, seed, per-delay estimates.</summary>
    public static JsonObject Build(ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, SamplerSettings settings)
    {
        var chain = sampler.Chain;
        var json = new JsonObject
        {
            ["mode"] = chain.Mode,
            ["method"] = chain.Amplification is null ? "phenomenological" : "amplification",
            ["added_noise"] = SummaryJson.Number(chain.AddedNoise),
            ["shots_per_delay"] = sampler.ShotsPerDelay,
            ["seed"] = sampler.Scenario.Seed,
            ["block_shots"] = settings.BlockShots,
            ["confidence"] = settings.Confidence,
            ["jitter"] = !sampler.Scenario.Jitter.IsNone,
        };
        if (chain.Amplification is { } a)
            json["amplification"] = new JsonObject
            {
                ["cavity"] = a.Cavity, ["coupling_hz"] = a.CouplingHz, ["duration_s"] = a.DurationS,
                ["gain"] = SummaryJson.Number(a.Gain), ["pulse_added_noise"] = SummaryJson.Number(a.PulseAddedNoise),
                ["detector_noise"] = SummaryJson.Number(a.DetectorNoise), ["input_referred_added_noise"] = SummaryJson.Number(a.AddedNoise),
            };
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
            delays.Add(row);
        }
        json["estimates"] = delays;
        return json;
    }
}

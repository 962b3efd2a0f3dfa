using System.Text.Json.Nodes;
using Decohere.Analyses.Check;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Scenarios;

namespace Decohere.Reports;

/// <summary>Writes summary.json: per stage and mode the end state and steady state, derived quantities, warnings and provenance.</summary>
public static class SummaryJson
{
    /// <summary>A finite number, or null (JSON has no NaN or ∞).</summary>
    public static JsonNode? Number(double value) => double.IsFinite(value) ? JsonValue.Create(value) : null;

    /// <summary>A list of warnings (or any messages) as a JSON array of strings.</summary>
    public static JsonArray Strings(IEnumerable<string> messages) => new([.. messages.Select(w => (JsonNode)JsonValue.Create(w))]);

    /// <summary>The suffix of the key that says why the value beside it is null: <c>squeezing_db</c> → <c>squeezing_db_reason</c>.</summary>
    public const string ReasonSuffix = "_reason";

    /// <summary>
    /// Sets <c>json[key]</c> to a finite value, or, where the value is undefined (null, NaN or ±∞), to null with
    /// <c>json[key_reason]</c> saying why. Every nullable number the tool writes carries its reason this way.
    /// </summary>
    public static void Set(JsonObject json, string key, double? value, string reason)
    {
        if (value is { } v && double.IsFinite(v)) json[key] = v;
        else
        {
            json[key] = null;
            json[key + ReasonSuffix] = reason;
        }
    }

    /// <summary>
    /// Replaces any number that is not finite left in a document by null with a reason beside it, so that no writer can
    /// put NaN or ∞ (which JSON cannot hold) in a file; the specific reasons are set where the values are made.
    /// </summary>
    public static void Sanitize(JsonNode? node)
    {
        switch (node)
        {
            case JsonObject o:
                foreach (var (key, value) in o.ToArray())
                {
                    if (value is JsonValue v && v.TryGetValue(out double d) && !double.IsFinite(d))
                    {
                        o[key] = null;
                        if (!o.ContainsKey(key + ReasonSuffix)) o[key + ReasonSuffix] = "not a finite number";
                    }
                    else Sanitize(value);
                }
                break;
            case JsonArray a:
                for (int i = 0; i < a.Count; i++)
                    if (a[i] is JsonValue v && v.TryGetValue(out double d) && !double.IsFinite(d)) a[i] = null;
                    else Sanitize(a[i]);
                break;
        }
    }

    /// <summary>The moments of one mode as a JSON object with the table's column names.</summary>
    public static JsonObject Moments(ModeMoments m) => new()
    {
        ["var_x"] = Number(m.VarX), ["var_p"] = Number(m.VarP), ["cov_xp"] = Number(m.CovXP),
        ["mean_x"] = Number(m.MeanX), ["mean_p"] = Number(m.MeanP),
        ["var_min"] = Number(m.VarMin), ["var_max"] = Number(m.VarMax), ["angle_rad"] = Number(m.AngleRad),
        ["occupancy"] = Number(m.Occupancy), ["squeezing_db"] = Number(m.SqueezingDb),
    };

    /// <summary>Provenance block shared by every summary file.</summary>
    public static JsonObject ProvenanceRoot(Provenance metadata) => new()
    {
        ["scenario"] = metadata.ScenarioName,
        ["scenario_sha256"] = metadata.ScenarioHash,
        ["version"] = metadata.ToolVersion,
        ["seed"] = metadata.Seed,
        ["conventions"] = Provenance.Conventions,
    };

    /// <summary>Builds the summary of a run.</summary>
    public static JsonObject Build(Dynamics dynamics, ScenarioReport report, Provenance metadata)
    {
        var s = dynamics.Scenario;
        var root = ProvenanceRoot(metadata);
        root["model"] = s.Model == ModelKind.Full ? "full" : "effective";
        root["modes"] = new JsonObject(report.Mechanical.Select(m =>
        {
            var mode = new JsonObject
            {
                ["frequency_hz"] = m.Mode.FrequencyHz,
                ["linewidth_hz"] = m.Mode.LinewidthHz,
                ["quality_factor"] = m.Mode.QualityFactor,
                ["bath_occupancy"] = Number(m.Occupancy),
                ["bath_temperature_k"] = Number(m.TemperatureK),
                ["thermal_decoherence_rate_per_s"] = Number(m.ThermalDecoherenceRate),
            };
            Set(mode, "thermal_decoherence_time_s", m.ThermalDecoherenceTime, "the bath occupancy is 0: the mode gains no thermal quanta");
            return KeyValuePair.Create<string, JsonNode?>(m.Mode.Name, mode);
        }));
        root["tones"] = new JsonArray(report.Tones.Select(t => (JsonNode)new JsonObject
        {
            ["stage"] = t.Stage, ["cavity"] = t.Tone.Cavity, ["mechanical"] = t.Tone.Mechanical,
            ["sideband"] = t.Tone.Sideband.ToString().ToLowerInvariant(),
            ["coupling_hz"] = t.Tone.CouplingHz, ["cooperativity"] = Number(t.Cooperativity),
            ["kappa_over_omega_m"] = Number(t.SidebandResolution),
        }).ToArray());
        var stages = new JsonArray();
        for (int i = 0; i < s.Stages.Length; i++)
        {
            var st = report.Stages[i];
            var end = dynamics.Boundaries[i + 1];
            var stage = new JsonObject
            {
                ["name"] = st.Stage.Name,
                ["start_s"] = st.StartS,
                ["end_s"] = st.StartS + st.Stage.DurationS,
                ["stable"] = st.Stability.IsStable,
                ["max_re_lambda_per_s"] = Number(st.Stability.MaxRealPart),
                ["slowest_decay_rate_per_s"] = st.Stability.IsStable ? Number(st.Stability.SlowestDecayRate) : null,
                ["growth_rate_per_s"] = st.Stability.IsStable ? null : Number(st.Stability.GrowthRate),
                ["end"] = ModesOf(end),
                ["steady"] = st.SteadyState is null ? null : ModesOf(st.SteadyState),
            };
            if (st.SteadyState is null)
                stage["steady" + ReasonSuffix] = $"no steady state: the drift has an eigenvalue with Re λ = {st.Stability.GrowthRate:G4} s⁻¹ ≥ 0";
            Set(stage, "steady_residual", st.SteadyResidual, "no steady state");
            var twoTone = report.TwoTone.Where(t => t.Stage == st.Stage.Name).ToArray();
            if (twoTone.Length > 0)
                stage["two_tone"] = new JsonArray(twoTone.Select(t => (JsonNode)new JsonObject
                {
                    ["mechanical"] = t.Mechanical, ["cavity"] = t.Cavity, ["squeezing_parameter_r"] = Number(t.SqueezingParameter),
                    ["damping_rate_per_s"] = Number(t.DampingRate),
                    ["var_min_bad_cavity"] = Number(t.VarMinBadCavity), ["squeezing_db_bad_cavity"] = Number(t.SqueezingDbBadCavity),
                    ["var_min_cavity_kept"] = Number(t.VarMinCavityKept), ["squeezing_db_cavity_kept"] = Number(t.SqueezingDbCavityKept),
                }).ToArray());
            stages.Add((JsonNode)stage);
        }
        root["stages"] = stages;
        root["warnings"] = Strings(report.Warnings);
        return root;
    }

    private static JsonObject ModesOf(GaussianState state) =>
        new(state.ModeNames.Select((m, j) => KeyValuePair.Create<string, JsonNode?>(m, Moments(state.Moments(j)))));

    /// <summary>Writes a JSON object atomically.</summary>
    public static void Write(JsonObject json, string path)
    {
        Sanitize(json);
        AtomicFile.WriteAllText(path, json.ToJsonString(JsonFiles.Options) + Environment.NewLine);
    }
}

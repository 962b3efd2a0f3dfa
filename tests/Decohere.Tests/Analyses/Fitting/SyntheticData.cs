using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using System.Globalization;
using System.Text;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;
using Decohere.Reports;
using Decohere.Sampling;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.Analyses.Fitting;

/// <summary>
/// Test-side synthetic data, in one place so it can be switched to the project's shot sampler later. Shots are drawn
/// from the engine's covariance (plus added noise) with MathNet's Normal and a Cholesky factor; variances from MathNet's
/// Wishart distribution of the scatter matrix, W₂(N − 1, Σ). Everything is seeded.
/// </summary>
internal static class SyntheticData
{
    /// <summary>Shots drawn by the project's own sampler, written to shots.parquet and read back as a lab's data file.</summary>
    public static async Task<FitData> SampledShotsAsync(Scenario scenario)
    {
        var sampler = new ShotSampler(scenario, Dynamics.Solve(scenario));
        string path = Path.Combine(TestPaths.NewTempDirectory(), "shots.parquet");
        await using (var table = await ShotsTable.CreateAsync(path, sampler, Provenance.For(scenario)))
        {
            await sampler.RunAsync(table.WriteAsync);
            await table.CommitAsync();
        }
        return await FitDataReader.ReadAsync(path, scenario);
    }

    /// <summary>A single mechanical mode (effective model, no tones) released for <paramref name="durationS"/> from a thermal state.</summary>
    public static Scenario SingleMode(double bathOccupancy, double linewidthHz, double addedNoise, double durationS, double initialOccupancy = 0.0,
        double frequencyHz = 4.1e6)
    {
        string I(double v) => v.ToString("R", CultureInfo.InvariantCulture);
        string initial = initialOccupancy == 0 ? "{ state: ground }" : $"{{ state: thermal, occupancy: {I(initialOccupancy)} }}";
        string yaml = $$"""
            name: test-drum
            model: effective
            modes:
              drum:
                kind: mechanical
                frequency: {{I(frequencyHz)}} Hz
                linewidth: {{I(linewidthHz)}} Hz
                bath: { occupancy: {{I(bathOccupancy)}} }
            initial:
              drum: {{initial}}
            stages:
              - name: release
                duration: {{I(durationS)}} s
            readout:
              mode: drum
              added_noise: {{I(addedNoise)}}
              shots: 1000
              stage: release
              delays: [0 s]
            output:
              step: {{I(durationS / 10)}} s
            seed: 1
            """;
        return ScenarioLoader.Parse(yaml, "test-drum.yaml");
    }

    /// <summary>The readout covariance at a delay, straight from <see cref="Dynamics.StateAt"/> (not through the fitter's stepping).</summary>
    public static Matrix<double> Covariance(Scenario s, double delayS)
    {
        var dynamics = Dynamics.Solve(s);
        var readout = s.Readout!;
        var state = dynamics.StateAt(dynamics.StageStarts[s.StageIndex(readout.Stage)] + delayS);
        int j = state.ModeNames.IndexOf(readout.Mode);
        var m = state.Moments(j);
        return Matrix<double>.Build.DenseOfArray(new[,] { { m.VarX + readout.AddedNoise!.Value, m.CovXP }, { m.CovXP, m.VarP + readout.AddedNoise!.Value } });
    }

    /// <summary>Per-delay shots (i, q) drawn from N(0, Σ(delay)).</summary>
    public static (double[] Delay, double[] I, double[] Q) Shots(Scenario s, IReadOnlyList<double> delays, int shots, int seed)
    {
        var rng = new Random(seed);
        var normal = new Normal(0, 1, rng);
        var d = new List<double>(); var i = new List<double>(); var q = new List<double>();
        foreach (double delay in delays)
        {
            var l = Covariance(s, delay).Cholesky().Factor;
            for (int k = 0; k < shots; k++)
            {
                double a = normal.Sample(), b = normal.Sample();
                d.Add(delay);
                i.Add(l[0, 0] * a);
                q.Add(l[1, 0] * a + l[1, 1] * b);
            }
        }
        return ([.. d], [.. i], [.. q]);
    }

    /// <summary>Per-delay sample covariances: scatter matrix drawn from Wishart W₂(N − 1, Σ), divided by N − 1.</summary>
    public static FitData Variances(Scenario s, IReadOnlyList<double> delays, int shots, int seed, bool withCovariance = true)
    {
        var rng = new Random(seed);
        var list = delays.Select(delay =>
        {
            var w = Wishart.Sample(rng, shots - 1, Covariance(s, delay)) / (shots - 1);
            return new DelayObservation(delay, shots, w[0, 0], w[1, 1], withCovariance ? w[0, 1] : null, 0, 0, double.NaN, double.NaN, $"delay {delay}");
        });
        return new FitData(DataShape.Variances, [.. list.OrderBy(o => o.DelayS)], "synthetic");
    }

    /// <summary>CSV text of shots.</summary>
    public static string ShotsCsv((double[] Delay, double[] I, double[] Q) shots)
    {
        var sb = new StringBuilder("delay_s,i,q\n");
        for (int k = 0; k < shots.Delay.Length; k++)
            sb.Append(CultureInfo.InvariantCulture, $"{shots.Delay[k]:R},{shots.I[k]:R},{shots.Q[k]:R}\n");
        return sb.ToString();
    }

    /// <summary>CSV text of a variances data set.</summary>
    public static string VariancesCsv(FitData data)
    {
        var sb = new StringBuilder("delay_s,var_i,var_q,cov_iq,shots\n");
        foreach (var o in data.Delays)
            sb.Append(CultureInfo.InvariantCulture, $"{o.DelayS:R},{o.VarI:R},{o.VarQ:R},{o.CovIQ ?? 0:R},{o.Shots}\n");
        return sb.ToString();
    }
}

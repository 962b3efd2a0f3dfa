namespace Decohere.Sampling;

/// <summary>Settings of the shot and trajectory samplers. Results depend on the seed only, never on the thread count.</summary>
/// <param name="MaxDegreeOfParallelism">Threads to use (null: all cores).</param>
/// <param name="BlockShots">Shots per random stream; part of the definition of a seeded run (changing it changes the numbers).</param>
/// <param name="BatchShots">Shots held in memory at once (one Parquet row group); bounds memory, does not change the numbers.</param>
/// <param name="BlockTrajectories">Trajectories per random stream.</param>
/// <param name="BootstrapResamples">Parametric bootstrap resamples per delay for eigenvalue, occupancy and dB intervals.</param>
/// <param name="Confidence">Two-sided confidence of every interval.</param>
public sealed record SamplerSettings(
    int? MaxDegreeOfParallelism = null,
    int BlockShots = 4096,
    int BatchShots = 1 << 19,
    int BlockTrajectories = 16,
    int BootstrapResamples = 1000,
    double Confidence = 0.95)
{
    /// <summary>The defaults.</summary>
    public static SamplerSettings Default { get; } = new();

    internal ParallelOptions Parallel(CancellationToken cancel) => new()
    {
        MaxDegreeOfParallelism = MaxDegreeOfParallelism ?? -1,
        CancellationToken = cancel,
    };
}

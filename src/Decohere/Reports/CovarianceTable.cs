using Decohere.Core;
using Decohere.Engine;
using Decohere.IO;

namespace Decohere.Reports;

/// <summary>Writes an <see cref="Evolution"/> as covariance.parquet: one row per output time per mode.</summary>
public static class CovarianceTable
{
    /// <summary>The columns, in file order.</summary>
    public static readonly ColumnSpec[] Columns =
    [
        ColumnSpec.Double("time_s"), ColumnSpec.String("stage"), ColumnSpec.String("mode"),
        ColumnSpec.Double("var_x"), ColumnSpec.Double("var_p"), ColumnSpec.Double("cov_xp"),
        ColumnSpec.Double("var_min"), ColumnSpec.Double("var_max"), ColumnSpec.Double("angle_rad"),
        ColumnSpec.Double("occupancy"), ColumnSpec.Double("squeezing_db"),
    ];

    /// <summary>Writes the table atomically to <paramref name="path"/>.</summary>
    public static async Task WriteAsync(Evolution evolution, string path, Provenance metadata, CancellationToken cancel = default)
    {
        int times = evolution.Times.Length, modes = evolution.ModeNames.Length;
        const int groupTimes = 1 << 16;
        var stageNames = evolution.Dynamics.Scenario.Stages.Select(s => s.Name).ToArray();
        await using var table = await ParquetTable.CreateAsync(path, Columns, metadata.ToKeyValues(), cancel);
        for (int start = 0; start < times; start += groupTimes)
        {
            int count = Math.Min(groupTimes, times - start), rows = count * modes;
            var t = new double[rows];
            var stage = new string[rows];
            var mode = new string[rows];
            var cols = Enumerable.Range(0, 8).Select(_ => new double[rows]).ToArray();
            int r = 0;
            for (int k = start; k < start + count; k++)
                for (int j = 0; j < modes; j++, r++)
                {
                    var m = evolution.Moments[k, j];
                    t[r] = evolution.Times[k];
                    stage[r] = stageNames[evolution.StageOfTime[k]];
                    mode[r] = evolution.ModeNames[j];
                    cols[0][r] = m.VarX; cols[1][r] = m.VarP; cols[2][r] = m.CovXP;
                    cols[3][r] = m.VarMin; cols[4][r] = m.VarMax; cols[5][r] = m.AngleRad;
                    cols[6][r] = m.Occupancy; cols[7][r] = m.SqueezingDb;
                }
            await table.WriteRowGroupAsync(rows, [t, stage, mode, .. cols], cancel);
        }
        await table.CommitAsync();
    }
}

using ScottPlot;
using Decohere.Analyses.Runs;
using Decohere.Reports.Plotting;
using Decohere.Sampling;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>
/// Two-dimensional histograms of the recorded (i, q) per delay, filled as the shots stream to their table (so no shot is
/// kept). Each delay's grid is centred on the predicted mean and spans ±<see cref="Span"/> predicted standard deviations
/// of the wider axis; shots outside are counted as such.
/// </summary>
public sealed class IqHistograms : IRunStream<ShotBatch>
{
    /// <summary>Bins per axis.</summary>
    public const int Bins = 64;

    /// <summary>Half-width of the grid in predicted standard deviations of the wider principal axis.</summary>
    public const double Span = 4.5;

    private readonly IRunStream<ShotBatch> _inner;
    private readonly object _gate = new();

    /// <summary>Counts per delay, [i bin, q bin].</summary>
    public long[][,] Counts { get; }

    /// <summary>Per delay: the grid's centre (i, q) and half-width.</summary>
    public (double I, double Q, double HalfWidth)[] Grids { get; }

    /// <summary>Shots outside the grid, per delay.</summary>
    public long[] Outside { get; }

    /// <summary>Histograms for the sampler's delays, passing every batch on to <paramref name="inner"/>.</summary>
    public IqHistograms(ShotSampler sampler, IRunStream<ShotBatch> inner)
    {
        _inner = inner;
        int n = sampler.Delays.Length;
        Counts = [.. Enumerable.Range(0, n).Select(_ => new long[Bins, Bins])];
        Outside = new long[n];
        Grids = [.. sampler.Delays.Select(d => (d.Model.MeanX, d.Model.MeanP, Span * Math.Sqrt(d.Model.VarMax + sampler.Chain.AddedNoise)))];
    }

    /// <inheritdoc/>
    public ValueTask WriteAsync(ShotBatch batch, CancellationToken cancel)
    {
        lock (_gate)
        {
            var (ci, cq, half) = Grids[batch.Delay];
            var counts = Counts[batch.Delay];
            double scale = Bins / (2 * half);
            for (int k = 0; k < batch.Count; k++)
            {
                double u = (batch.I[k] - ci + half) * scale, v = (batch.Q[k] - cq + half) * scale;
                if (u >= 0 && u < Bins && v >= 0 && v < Bins) counts[(int)u, (int)v]++;
                else Outside[batch.Delay]++;
            }
        }
        return _inner.WriteAsync(batch, cancel);
    }

    /// <inheritdoc/>
    public Task CommitAsync() => _inner.CommitAsync();

    /// <inheritdoc/>
    public ValueTask DisposeAsync() => _inner.DisposeAsync();
}

/// <summary>
/// iq.png/.svg: per delay the (i, q) histogram of the recorded shots with two 1σ ellipses — predicted (the model's
/// covariance plus the readout's added noise on each quadrature) and estimated (the shots' sample mean and covariance).
/// </summary>
public static class IqPlot
{
    /// <summary>The figure, ready to write to <paramref name="stem"/>.png and .svg.</summary>
    public static FigureOutput Draw(IqHistograms histograms, ShotSampler sampler, IReadOnlyList<ReadoutEstimate> estimates, string stem)
    {
        int n = sampler.Delays.Length, columns = Math.Min(n, 3), rows = (n + columns - 1) / columns;
        var delays = DisplayUnits.FormatAll([.. sampler.Delays.Select(d => d.DelayS)], Core.Dimension.Time);
        var plots = new Plot[n];
        for (int k = 0; k < n; k++)
        {
            var plot = plots[k] = Figure.New();
            var (ci, cq, half) = histograms.Grids[k];
            var counts = histograms.Counts[k];
            int bins = IqHistograms.Bins;
            // Row 0 of a heat map is drawn at the top: q grows upwards.
            var z = new double[bins, bins];
            for (int u = 0; u < bins; u++)
                for (int v = 0; v < bins; v++)
                    z[bins - 1 - v, u] = counts[u, v] > 0 ? counts[u, v] : double.NaN;
            var map = plot.Add.Heatmap(z);
            map.Colormap = new CountsColormap();
            map.NaNCellColor = Colors.Transparent;
            map.Extent = new CoordinateRect(ci - half, ci + half, cq - half, cq + half);

            var d = sampler.Delays[k];
            double noise = sampler.Chain.AddedNoise;
            Ellipse(plot, d.Model.MeanX, d.Model.MeanP, d.Model.VarX + noise, d.Model.VarP + noise, d.Model.CovXP, Figure.Colour(1), dashed: false,
                k == 0 ? "predicted 1σ" : null);
            var e = estimates[k];
            Ellipse(plot, e.MeanI, e.MeanQ, e.VarI, e.VarQ, e.CovIQ, Figure.Colour(2), dashed: true, k == 0 ? "estimated 1σ" : null);
            plot.Axes.SetLimits(ci - half, ci + half, cq - half, cq + half);
            plot.Axes.SquareUnits();
            Ticks.Linear(plot.Axes.Bottom);
            Ticks.Linear(plot.Axes.Left);
            plot.Title($"delay {delays[k]}", size: Figure.FontSize + 1);
            plot.XLabel("i (√quanta)");
            plot.YLabel("q (√quanta)");
            if (k == 0) plot.ShowLegend(Alignment.UpperLeft);
        }
        var multiplot = new Multiplot();
        multiplot.Reset(plots[0]);
        foreach (var p in plots.Skip(1)) multiplot.AddPlot(p);
        multiplot.Layout = new ScottPlot.MultiplotLayouts.Grid(rows, columns);
        return new FigureOutput(multiplot, stem, 480 * columns, 480 * rows);
    }

    // The 1σ ellipse {μ + L·(cos θ, sin θ)} of a covariance C = L·Lᵀ (Cholesky factor L).
    private static void Ellipse(Plot plot, double mi, double mq, double vi, double vq, double c, Color colour, bool dashed, string? legend)
    {
        if (!(vi > 0 && vq > 0 && vi * vq - c * c > 0)) return;
        double l00 = Math.Sqrt(vi), l10 = c / l00, l11 = Math.Sqrt(vq - l10 * l10);
        const int points = 121;
        var x = new double[points];
        var y = new double[points];
        for (int k = 0; k < points; k++)
        {
            double t = 2 * Math.PI * k / (points - 1), a = Math.Cos(t), b = Math.Sin(t);
            x[k] = mi + l00 * a;
            y[k] = mq + l10 * a + l11 * b;
        }
        var line = plot.Add.ScatterLine(x, y);
        line.Color = colour;
        line.LineWidth = 2.5f;
        if (dashed) line.LinePattern = LinePattern.Dashed;
        if (legend is not null) line.LegendText = legend;
    }
}

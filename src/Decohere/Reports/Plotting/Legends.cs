using ScottPlot;

namespace Decohere.Reports.Plotting;

/// <summary>Legends placed beside the data.</summary>
public static class Legends
{
    /// <summary>
    /// Shows the legend below the data when the plot has entries for it. ScottPlot lays out an empty legend panel on an
    /// edge with no size, which leaves the whole figure blank; without entries there is no legend.
    /// </summary>
    public static void BelowIfAny(Plot plot)
    {
        if (plot.Legend.GetItems().Length > 0) plot.ShowLegend(Edge.Bottom);
    }
}

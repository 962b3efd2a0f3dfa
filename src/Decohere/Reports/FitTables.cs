using System.Globalization;
using System.Text;
using Decohere.Analyses.Fitting;
using Decohere.Core;
using Decohere.IO;
using Decohere.Reports.Plotting;
using Decohere.Statistics;

namespace Decohere.Reports;

/// <summary>
/// fit.md and fit.tex: the fit's results as a table to paste into a notebook or a paper — each fitted parameter, derived
/// quantity and identified combination with its value, interval and unit, named and scaled as in the plots
/// (<see cref="QuantityLabels"/>), and the goodness of fit.
/// </summary>
public static class FitTables
{
    /// <summary>One line of the table: name, value, standard error, interval ends (all in one unit), the unit and the interval's method.</summary>
    public sealed record Row(string Quantity, string Value, string StandardError, string Low, string High, string Unit, string Method);

    /// <summary>The rows: parameters (by path), then derived quantities, then identified combinations.</summary>
    public static IReadOnlyList<Row> Rows(FitResult fit)
    {
        var rows = new List<Row>();
        for (int k = 0; k < fit.Parameters.Length; k++)
            rows.Add(Of(fit.Parameters[k], QuantityLabels.For(fit.Paths[k].Text, fit.Scenario)));
        foreach (var d in fit.Derived) rows.Add(Of(d, QuantityLabels.For(d.Name, fit.Scenario)));
        foreach (var c in fit.Combinations)
        {
            var label = QuantityLabels.For(c.Name, fit.Scenario);
            var row = Of(c.FittedQuantity, label.Name == c.Name ? label with { Name = $"{c.Name} = {c.Expression}" } : label);
            // A combination that is also a derived quantity (γ·n_th) is listed once.
            if (!rows.Contains(row)) rows.Add(row);
        }
        return rows;
    }

    /// <summary>"2.53 mK [0.956 mK, ∞]": a value with its interval in the unit that suits the value.</summary>
    public static string Interval(FittedQuantity q, QuantityLabel label)
    {
        var row = Of(q, label);
        string unit = row.Unit.Length > 0 ? " " + row.Unit : "";
        return $"{row.Value}{unit} [{row.Low}, {row.High}]";
    }

    private static Row Of(FittedQuantity q, QuantityLabel label)
    {
        var unit = label.UnitFor([q.Value]);
        string N(double v) => double.IsPositiveInfinity(v) ? "∞" : double.IsNegativeInfinity(v) ? "−∞" : !double.IsFinite(v) ? "–"
            : Ticks.Label(Math.Round(unit.From(v), 12) is var x && Math.Abs(x) >= 1e5 ? x : double.Parse(x.ToString("G4", CultureInfo.InvariantCulture), CultureInfo.InvariantCulture));
        // An end the profile never reached is the domain's bound below and unbounded above.
        return new Row(label.Name, N(q.Value), N(q.StandardError), N(q.Low) + (q.LowReached ? "" : " (bound)"), q.HighReached ? N(q.High) : "∞", unit.Symbol, q.Method);
    }

    /// <summary>The Markdown document.</summary>
    public static string Markdown(FitResult fit)
    {
        var md = new StringBuilder();
        md.AppendLine($"# Fit of {fit.Scenario.Name}").AppendLine();
        md.AppendLine($"Data: `{fit.Data.Source}` ({fit.Data.Shape.ToString().ToLowerInvariant()}, {fit.Data.Delays.Length} delays, {fit.Data.TotalShots} shots); {fit.Likelihood}.").AppendLine();
        md.AppendLine($"| quantity | value | {fit.Confidence * 100:G3}% interval | unit | interval from |");
        md.AppendLine("|---|---:|---|---|---|");
        foreach (var r in Rows(fit))
            md.AppendLine($"| {Md(r.Quantity)} | {r.Value} | [{r.Low}, {r.High}] | {Md(r.Unit)} | {Md(r.Method)} |");
        md.AppendLine().AppendLine(Goodness(fit));
        foreach (var w in fit.Warnings) md.AppendLine().Append("- warning: ").AppendLine(Md(w));
        return md.ToString();
    }

    /// <summary>The LaTeX table (booktabs), one <c>table</c> environment to \input.</summary>
    public static string Latex(FitResult fit)
    {
        var tex = new StringBuilder();
        tex.AppendLine("% Requires \\usepackage{booktabs}.");
        tex.AppendLine("\\begin{table}[htbp]").AppendLine("  \\centering");
        tex.AppendLine("  \\begin{tabular}{lrll}").AppendLine("    \\toprule");
        tex.AppendLine($"    quantity & value & {fit.Confidence * 100:G3}\\,\\% interval & unit \\\\").AppendLine("    \\midrule");
        foreach (var r in Rows(fit))
            tex.AppendLine($"    {Tex(r.Quantity)} & {Tex(r.Value)} & [{Tex(r.Low)}, {Tex(r.High)}] & {Tex(r.Unit)} \\\\");
        tex.AppendLine("    \\bottomrule").AppendLine("  \\end{tabular}");
        tex.AppendLine($"  \\caption{{Fit of {Tex(fit.Scenario.Name)} to {Tex(Path.GetFileName(fit.Data.Source))}. {Tex(Goodness(fit))}}}");
        tex.AppendLine("\\end{table}");
        return tex.ToString();
    }

    /// <summary>Writes fit.md and fit.tex into the directory, each atomically; returns their paths.</summary>
    public static string[] Write(FitResult fit, string directory)
    {
        string md = Path.Combine(directory, "fit.md"), tex = Path.Combine(directory, "fit.tex");
        AtomicFile.Write(md, tmp => File.WriteAllText(tmp, Markdown(fit)));
        AtomicFile.Write(tex, tmp => File.WriteAllText(tmp, Latex(fit)));
        return [md, tex];
    }

    private static string Goodness(FitResult fit)
    {
        var g = fit.Goodness;
        return FormattableString.Invariant($"Deviance {g.Deviance:G4} for {g.DegreesOfFreedom} degrees of freedom (reduced χ² {g.ReducedChiSquare:G3}, p = {g.PValue:G3}).");
    }

    private static string Md(string s) => s.Replace("|", "\\|", StringComparison.Ordinal);

    // Text to LaTeX: special characters escaped, the Greek letters and signs the labels use in math mode.
    private static string Tex(string s)
    {
        const string superscripts = "⁻⁰¹²³⁴⁵⁶⁷⁸⁹", plain = "-0123456789";
        var b = new StringBuilder();
        for (int i = 0; i < s.Length; i++)
        {
            char c = s[i];
            if (superscripts.Contains(c))
            {
                // A run of superscript characters is one exponent: "s⁻¹" → s$^{-1}$.
                var exponent = new StringBuilder();
                for (; i < s.Length && superscripts.IndexOf(s[i]) is var k and >= 0; i++) exponent.Append(plain[k]);
                i--;
                b.Append("$^{").Append(exponent).Append("}$");
                continue;
            }
            b.Append(c switch
            {
                '\\' => "\\textbackslash{}", '_' => "\\_", '%' => "\\%", '&' => "\\&", '#' => "\\#", '$' => "\\$", '{' => "\\{", '}' => "\\}",
                '~' => "\\textasciitilde{}", '^' => "\\textasciicircum{}",
                'γ' => "$\\gamma$", 'ω' => "$\\omega$", 'η' => "$\\eta$", 'δ' => "$\\delta$", 'λ' => "$\\lambda$", 'π' => "$\\pi$",
                'σ' => "$\\sigma$", 'µ' or 'μ' => "$\\mu$", 'Γ' => "$\\Gamma$", '·' => "$\\cdot$", '∞' => "$\\infty$", '−' => "$-$",
                '₊' => "$_+$", '₋' => "$_-$", '×' => "$\\times$", '…' => "\\ldots{}", 'χ' => "$\\chi$",
                _ => c.ToString(),
            });
        }
        return b.ToString().Replace("$$", "", StringComparison.Ordinal);
    }
}

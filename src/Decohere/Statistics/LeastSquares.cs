using Decohere.Core;

namespace Decohere.Statistics;

/// <summary>The result of a least-squares fit: the likelihood fit, the residual sum of squares and (n − p)-scaled standard errors.</summary>
public sealed record LeastSquaresResult(MaximumLikelihoodResult Fit, double ResidualSumOfSquares, double ResidualStandardDeviation, double[] StandardErrors);

/// <summary>
/// Nonlinear least squares through the maximum-likelihood driver: y_i = f(x_i; b) + ε_i with ε ~ N(0, σ²), σ profiled
/// out, so −2 ln L = n ln(RSS/n) + const. Standard errors are scaled to the residual variance RSS/(n − p), the convention
/// of the NIST Statistical Reference Datasets for nonlinear regression (NIST/ITL StRD; D. M. Bates, D. G. Watts,
/// Nonlinear Regression Analysis and Its Applications, Wiley 1988, sec. 2.3).
/// </summary>
public static class LeastSquares
{
    /// <summary>Fits <paramref name="model"/>(b, x) to the points.</summary>
    public static LeastSquaresResult Fit(IReadOnlyList<double> x, IReadOnlyList<double> y, Func<double[], double, double> model,
        IReadOnlyList<FitParameter> parameters, MaximumLikelihoodSettings? settings = null)
    {
        if (x.Count != y.Count) throw new ArgumentException("x and y differ in length");
        int n = x.Count, p = parameters.Count;
        if (n <= p) throw new InputException($"{n} points cannot determine {p} parameters with a residual variance");
        double Rss(double[] b)
        {
            double s = 0;
            for (int i = 0; i < n; i++) { double r = y[i] - model(b, x[i]); s += r * r; }
            return s;
        }
        var fit = MaximumLikelihood.Fit(b => n * Math.Log(Rss(b) / n), parameters, settings);
        double rss = Rss(fit.Estimates);
        // The profile likelihood's curvature gives σ̂²_ML = RSS/n; the StRD convention is RSS/(n − p).
        double scale = Math.Sqrt((double)n / (n - p));
        return new LeastSquaresResult(fit, rss, Math.Sqrt(rss / (n - p)), [.. fit.StandardErrors.Select(s => s * scale)]);
    }
}

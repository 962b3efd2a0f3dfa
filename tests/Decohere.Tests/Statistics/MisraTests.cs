using MathNet.Numerics.LinearAlgebra;
using System.Globalization;
using Decohere.Analyses.Fitting;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

/// <summary>
/// The optimiser and its standard errors against the NIST StRD nonlinear-regression dataset Misra1a,
/// y = b1·(1 − exp(−b2·x)): the same form as a heating curve from the ground state, n(t) = n_th(1 − e^(−γt)).
/// The data file and its certified values were transcribed from memory of the public NIST StRD page (no download);
/// <see cref="IndependentGaussNewtonAgreesWithTheTranscribedCertifiedValues"/> checks the recall with a method that shares no code with the fitter.
/// </summary>
public class MisraTests
{
    private sealed record Misra(double[] X, double[] Y, double[] Start1, double[] Start2, double[] Certified, double[] CertifiedSd, double Rss, double ResidualSd);

    private static Misra Load()
    {
        var lines = File.ReadAllLines(Path.Combine(AppContext.BaseDirectory, "Analyses", "Fitting", "Data", "Misra1a.dat"));
        double[] Row(string key) => lines.First(l => l.TrimStart().StartsWith(key, StringComparison.Ordinal))
            .Split('=')[1].Split(' ', StringSplitOptions.RemoveEmptyEntries).Select(v => double.Parse(v, CultureInfo.InvariantCulture)).ToArray();
        double After(string key) => double.Parse(lines.First(l => l.StartsWith(key, StringComparison.Ordinal))[key.Length..].Trim(), CultureInfo.InvariantCulture);
        int start = Array.FindIndex(lines, l => l.StartsWith("Data:   y", StringComparison.Ordinal)) + 1;
        var data = lines.Skip(start).Where(l => l.Trim().Length > 0)
            .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries).Select(v => double.Parse(v, CultureInfo.InvariantCulture)).ToArray()).ToArray();
        var b1 = Row("b1 =");
        var b2 = Row("b2 =");
        return new Misra(data.Select(d => d[1]).ToArray(), data.Select(d => d[0]).ToArray(),
            [b1[0], b2[0]], [b1[1], b2[1]], [b1[2], b2[2]], [b1[3], b2[3]],
            After("Residual Sum of Squares:"), After("Residual Standard Deviation:"));
    }

    private static double Model(double[] b, double x) => b[0] * (1 - Math.Exp(-b[1] * x));

    [Fact]
    public void FileHasTheFourteenObservationsOfTheStRDLayout()
    {
        var m = Load();
        Assert.Equal(14, m.X.Length);
        // NIST StRD Misra1a: 14 observations, 2 parameters, 12 degrees of freedom; RSD = sqrt(RSS/12) (recalled from memory).
        Assert.Equal(Math.Sqrt(m.Rss / 12), m.ResidualSd, 9);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    public void OptimiserReproducesTheCertifiedValuesFromBothStarts(int start)
    {
        var m = Load();
        var s = start == 1 ? m.Start1 : m.Start2;
        var fit = LeastSquares.Fit(m.X, m.Y, Model,
            [new FitParameter("b1", s[0], ParameterDomain.Positive), new FitParameter("b2", s[1], ParameterDomain.Positive)],
            new MaximumLikelihoodSettings { Starts = 1, Profiles = false, Parallel = false });
        var observed = ObservedInformationStandardErrors(m, m.Certified);
        for (int k = 0; k < 2; k++)
        {
            // Certified values (NIST StRD Misra1a, recalled from memory): parameters to 1e-6 relative.
            Assert.True(Math.Abs(fit.Fit.Estimates[k] / m.Certified[k] - 1) < 1e-6, $"b{k + 1} = {fit.Fit.Estimates[k]:R}, certified {m.Certified[k]:R}");
            // The fitter's errors come from the observed information (the full Hessian). The certified standard deviations
            // use the Gauss–Newton form s²(JᵀJ)⁻¹ (expected information), which for Misra1a is 1.4e-3 (b1) and 1.4e-3 (b2)
            // lower — computed independently below — so the certified check allows 3e-3 and the observed-information one 3e-4.
            Assert.True(Math.Abs(fit.StandardErrors[k] / m.CertifiedSd[k] - 1) < 3e-3, $"sd(b{k + 1}) = {fit.StandardErrors[k]:R}, certified {m.CertifiedSd[k]:R}");
            Assert.True(Math.Abs(fit.StandardErrors[k] / observed[k] - 1) < 3e-4, $"sd(b{k + 1}) = {fit.StandardErrors[k]:R}, analytic observed information {observed[k]:R}");
        }
        Assert.True(Math.Abs(fit.ResidualSumOfSquares / m.Rss - 1) < 1e-6, $"RSS = {fit.ResidualSumOfSquares:R}, certified {m.Rss:R}");
    }

    /// <summary>
    /// Standard errors from the analytic observed information of least squares, s²(JᵀJ − Σ rᵢ ∇²fᵢ)⁻¹, s² = RSS/(n − p)
    /// (D. M. Bates, D. G. Watts, Nonlinear Regression Analysis and Its Applications, Wiley 1988, sec. 2.3 and 7.1).
    /// </summary>
    private static double[] ObservedInformationStandardErrors(Misra m, double[] b)
    {
        var a = Matrix<double>.Build.Dense(2, 2);
        double rss = 0;
        for (int i = 0; i < m.X.Length; i++)
        {
            double e = Math.Exp(-b[1] * m.X[i]), r = m.Y[i] - b[0] * (1 - e);
            double j0 = 1 - e, j1 = b[0] * m.X[i] * e;
            rss += r * r;
            // JᵀJ minus the residual-weighted second derivatives: ∂²f/∂b1∂b2 = x e^(−b2 x), ∂²f/∂b2² = −b1 x² e^(−b2 x).
            a[0, 0] += j0 * j0;
            a[0, 1] += j0 * j1 - r * m.X[i] * e;
            a[1, 1] += j1 * j1 + r * b[0] * m.X[i] * m.X[i] * e;
        }
        a[1, 0] = a[0, 1];
        var cov = a.Inverse() * (rss / (m.X.Length - 2));
        return [Math.Sqrt(cov[0, 0]), Math.Sqrt(cov[1, 1])];
    }

    /// <summary>
    /// An independent check of the recalled values: plain Gauss–Newton with analytic Jacobian and MathNet's QR solve
    /// (no code shared with the fitter), standard errors s·sqrt(diag (JᵀJ)⁻¹), s² = RSS/(n − p).
    /// </summary>
    [Fact]
    public void IndependentGaussNewtonAgreesWithTheTranscribedCertifiedValues()
    {
        var m = Load();
        var b = Vector<double>.Build.DenseOfArray(m.Start2);
        int n = m.X.Length;
        Matrix<double> J = Matrix<double>.Build.Dense(n, 2);
        for (int it = 0; it < 100; it++)
        {
            var r = Vector<double>.Build.Dense(n);
            for (int i = 0; i < n; i++)
            {
                double e = Math.Exp(-b[1] * m.X[i]);
                r[i] = m.Y[i] - b[0] * (1 - e);
                J[i, 0] = 1 - e;
                J[i, 1] = b[0] * m.X[i] * e;
            }
            var step = J.QR().Solve(r);
            b += step;
            if (Math.Abs(step[0] / b[0]) < 1e-14 && Math.Abs(step[1] / b[1]) < 1e-14) break;
        }
        double rss = m.X.Select((x, i) => Math.Pow(m.Y[i] - Model([b[0], b[1]], x), 2)).Sum();
        var cov = (J.Transpose() * J).Inverse() * (rss / (n - 2));
        for (int k = 0; k < 2; k++)
        {
            Assert.True(Math.Abs(b[k] / m.Certified[k] - 1) < 1e-8, $"Gauss–Newton b{k + 1} = {b[k]:R}, transcribed {m.Certified[k]:R}");
            Assert.True(Math.Abs(Math.Sqrt(cov[k, k]) / m.CertifiedSd[k] - 1) < 1e-6, $"Gauss–Newton sd(b{k + 1}) = {Math.Sqrt(cov[k, k]):R}");
        }
        Assert.True(Math.Abs(rss / m.Rss - 1) < 1e-8);
    }
}

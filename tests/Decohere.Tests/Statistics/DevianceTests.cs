using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using Decohere.Analyses.Fitting;
using Decohere.IO;
using Decohere.Statistics;

namespace Decohere.Tests.Statistics;

/// <summary>The deviances against MathNet's own densities: D = −2[ln p(data | model) − ln p(data | saturated)].</summary>
public class DevianceTests
{
    [Fact]
    public void WishartDevianceMatchesMathNetWishartDensity()
    {
        long shots = 41;
        double nu = shots - 1;
        var sample = Matrix<double>.Build.DenseOfArray(new[,] { { 3.1, 0.4 }, { 0.4, 2.2 } });
        var sigma = Matrix<double>.Build.DenseOfArray(new[,] { { 2.5, -0.3 }, { -0.3, 2.9 } });
        // MathNet's Wishart(ν, S) is the law of the scatter matrix ν·Ŝ with scale S = Σ.
        double expected = -2 * (Math.Log(new Wishart(nu, sigma).Density(sample * nu)) - Math.Log(new Wishart(nu, sample).Density(sample * nu)));
        double d = Deviance.Wishart(shots, sample[0, 0], sample[1, 1], sample[0, 1], sigma[0, 0], sigma[1, 1], sigma[0, 1]);
        Assert.Equal(expected, d, 1e-9 * expected);
    }

    [Fact]
    public void ChiSquareDevianceMatchesMathNetChiSquaredDensity()
    {
        long shots = 25;
        double nu = shots - 1, s2 = 1.7, sigma2 = 1.2;
        // (N − 1)s²/σ² ~ χ²_ν, so p(s² | σ²) = χ²_ν density at νs²/σ² times ν/σ² (change of variables).
        double Ln(double v) => ChiSquared.PDFLn(nu, nu * s2 / v) + Math.Log(nu / v);
        double expected = -2 * (Ln(sigma2) - Ln(s2));
        Assert.Equal(expected, Deviance.ChiSquare(shots, s2, sigma2), 1e-10);
    }

    [Fact]
    public void DevianceVanishesOnlyAtTheSaturatedModel()
    {
        Assert.Equal(0, Deviance.Wishart(100, 2, 3, 0.5, 2, 3, 0.5), 12);
        Assert.True(Deviance.Wishart(100, 2, 3, 0.5, 2, 3, 0.4) > 0);
        Assert.True(double.IsPositiveInfinity(Deviance.Wishart(100, 2, 3, 0.5, 1, 1, 2)));
    }
}

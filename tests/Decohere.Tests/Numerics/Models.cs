using MathNet.Numerics.LinearAlgebra;

namespace Decohere.Tests.Numerics;

/// <summary>
/// Drift and diffusion matrices of damped, coupled bosonic modes in the quadrature ordering
/// (x_1, p_1, x_2, p_2, …) with [x, p] = i, so that dR/dt = A R + noise, A = Ω H − Γ/2,
/// D = ⊕ γ_j (n_j + ½) I₂ (C. Weedbrook et al., Rev. Mod. Phys. 84, 621 (2012), §II;
/// A. A. Clerk et al., Rev. Mod. Phys. 82, 1155 (2010), app. D for the input-output damping).
/// </summary>
internal static class Models
{
    public static Matrix<double> Omega(int modes)
    {
        var omega = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        for (int j = 0; j < modes; j++)
        {
            omega[2 * j, 2 * j + 1] = 1;
            omega[2 * j + 1, 2 * j] = -1;
        }

        return omega;
    }

    /// <summary>A = Ω H − ⊕ (γ_j / 2) I₂ for a quadratic Hamiltonian ½ Rᵀ H R.</summary>
    public static Matrix<double> Drift(Matrix<double> hamiltonian, double[] rates)
    {
        int modes = rates.Length;
        var a = Omega(modes) * hamiltonian;
        for (int j = 0; j < modes; j++)
        {
            a[2 * j, 2 * j] -= rates[j] / 2;
            a[2 * j + 1, 2 * j + 1] -= rates[j] / 2;
        }

        return a;
    }

    public static Matrix<double> Diffusion(double[] rates, double[] occupancies)
    {
        var d = Matrix<double>.Build.Dense(2 * rates.Length, 2 * rates.Length);
        for (int j = 0; j < rates.Length; j++)
        {
            d[2 * j, 2 * j] = rates[j] * (occupancies[j] + 0.5);
            d[2 * j + 1, 2 * j + 1] = rates[j] * (occupancies[j] + 0.5);
        }

        return d;
    }

    /// <summary>Adds G (x_a x_b + s·p_a p_b) to H: s = +1 beam splitter, s = −1 two-mode squeezing.</summary>
    public static void AddCoupling(Matrix<double> h, int a, int b, double g, double pSign)
    {
        h[2 * a, 2 * b] += g;
        h[2 * b, 2 * a] += g;
        h[2 * a + 1, 2 * b + 1] += pSign * g;
        h[2 * b + 1, 2 * a + 1] += pSign * g;
    }

    /// <summary>Adds ω/2 (x_j² + p_j²) to H.</summary>
    public static void AddFrequency(Matrix<double> h, int j, double omega)
    {
        h[2 * j, 2 * j] += omega;
        h[2 * j + 1, 2 * j + 1] += omega;
    }

    /// <summary>Cavity (κ, n_c) coupled by a beam splitter G to a high-Q mechanical mode (γ, n_m), resonant frame.</summary>
    public static (Matrix<double> A, Matrix<double> D) Optomechanics(double kappa, double gamma, double g, double nCavity, double nMechanics)
    {
        var h = Matrix<double>.Build.Dense(4, 4);
        AddCoupling(h, 0, 1, g, +1);
        double[] rates = [kappa, gamma];
        return (Drift(h, rates), Diffusion(rates, [nCavity, nMechanics]));
    }

    /// <summary>Chain of damped modes with nearest-neighbour beam-splitter couplings and spread frequencies.</summary>
    public static (Matrix<double> A, Matrix<double> D) Chain(int modes, bool uniformOccupancy)
    {
        var h = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        var rates = new double[modes];
        var occupancies = new double[modes];
        for (int j = 0; j < modes; j++)
        {
            AddFrequency(h, j, 1.0 + 0.05 * j);
            rates[j] = 0.01 + 0.02 * (j % 7);
            occupancies[j] = uniformOccupancy ? 3.0 : 0.5 * j;
            if (j + 1 < modes) AddCoupling(h, j, j + 1, 0.3, +1);
        }

        return (Drift(h, rates), Diffusion(rates, occupancies));
    }

    public static double RelativeDifference(Matrix<double> actual, Matrix<double> expected)
        => (actual - expected).FrobeniusNorm() / expected.FrobeniusNorm();

    public static Matrix<double> RandomMatrix(Random random, int rows, int columns, double scale)
        => Matrix<double>.Build.Dense(rows, columns, (_, _) => scale * (2 * random.NextDouble() - 1));

    public static Matrix<double> RandomSpd(Random random, int n)
    {
        var m = RandomMatrix(random, n, n, 1.0);
        return m.TransposeAndMultiply(m) + Matrix<double>.Build.DenseIdentity(n);
    }
}

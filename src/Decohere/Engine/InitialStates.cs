using MathNet.Numerics.LinearAlgebra;
using Decohere.Scenarios;
using Decohere.Core;

namespace Decohere.Engine;

/// <summary>Builds the state at t = 0 from a scenario's <c>initial</c> block.</summary>
internal static class InitialStates
{
    /// <summary>
    /// Modes not listed start in their own bath's thermal state; <c>steady</c> modes take their joint block
    /// (with correlations among them) from the steady state of the first stage.
    /// </summary>
    public static GaussianState Build(Scenario scenario, Dynamics dynamics)
    {
        var modes = dynamics.ModeNames;
        int n = 2 * modes.Length;
        var v = Matrix<double>.Build.Dense(n, n);
        var mean = Vector<double>.Build.Dense(n);
        var steady = new List<int>();
        for (int j = 0; j < modes.Length; j++)
        {
            var mode = scenario.ModeNamed(modes[j]);
            var initial = scenario.Initial.GetValueOrDefault(mode.Name) ?? new InitialState.Thermal(mode.Bath.Occupancy);
            switch (initial)
            {
                case InitialState.Ground:
                    SetBlock(v, j, 0.5, 0.5, 0);
                    break;
                case InitialState.Thermal t:
                    SetBlock(v, j, t.Occupancy + 0.5, t.Occupancy + 0.5, 0);
                    break;
                case InitialState.Squeezed s:
                {
                    // Pure squeezed vacuum: V = R(θ) diag(½·10^(−S/10), ½·10^(S/10)) R(θ)ᵀ.
                    double small = Physics.VarianceAtSqueezing(s.SqueezingDb), large = 0.25 / small;
                    double c = Math.Cos(s.AngleRad), si = Math.Sin(s.AngleRad);
                    SetBlock(v, j, small * c * c + large * si * si, small * si * si + large * c * c, (small - large) * c * si);
                    break;
                }
                case InitialState.Coherent co:
                    SetBlock(v, j, 0.5, 0.5, 0);
                    mean[2 * j] = co.X;
                    mean[2 * j + 1] = co.P;
                    break;
                case InitialState.Steady:
                    steady.Add(j);
                    break;
            }
        }
        if (steady.Count > 0)
        {
            var ss = dynamics.SteadyState(0);
            foreach (int a in steady)
                foreach (int b in steady)
                    for (int r = 0; r < 2; r++)
                        for (int c = 0; c < 2; c++)
                            v[2 * a + r, 2 * b + c] = ss.Covariance[2 * a + r, 2 * b + c];
        }
        return new GaussianState(mean, v, modes);
    }

    private static void SetBlock(Matrix<double> v, int j, double xx, double pp, double xp)
    {
        v[2 * j, 2 * j] = xx;
        v[2 * j + 1, 2 * j + 1] = pp;
        v[2 * j, 2 * j + 1] = xp;
        v[2 * j + 1, 2 * j] = xp;
    }
}

using MathNet.Numerics.LinearAlgebra;
using Decohere.Engine;
using Decohere.Numerics;

namespace Decohere.Tests.Engine;

/// <summary>One stability criterion: a stage is stable exactly when the steady-state solver accepts its drift.</summary>
public class StabilityTests
{
    private static bool SolverAccepts(Matrix<double> a)
    {
        try
        {
            Lyapunov.Solve(a, Matrix<double>.Build.DenseIdentity(a.RowCount));
            return true;
        }
        catch (UnstableDynamicsException)
        {
            return false;
        }
    }

    [Theory]
    // Diagonal drifts (eigenvalues exact, ‖A‖_F = 1 to 1e-26): slowest decay just above and just below 1e-13·‖A‖_F.
    [InlineData(-2e-13, 0, true)]
    [InlineData(-0.5e-13, 0, false)]
    // Non-normal: eigenvalues −1e-9 and −1 but ‖A‖_F ≈ 1e6, so a decay of 1e-9 s⁻¹ is below the eigenvalues' rounding
    // (ε‖A‖ ≈ 2e-10) and cannot be told from zero; judged against the eigenvalues alone it would pass as stable.
    [InlineData(-1e-9, 1e6, false)]
    [InlineData(-1e-6, 1e6, true)]
    public void StageStabilityAndSteadyStateSolverAgree(double slowest, double offDiagonal, bool stable)
    {
        var a = Matrix<double>.Build.DenseOfArray(new double[,] { { slowest, offDiagonal }, { 0, -1 } });
        var stability = Stability.Of(a);
        Assert.Equal(stable, stability.IsStable);
        Assert.Equal(stable, SolverAccepts(a));
        Assert.Equal(slowest, stability.GrowthRate, 1e-3 * Math.Abs(slowest));
    }
}

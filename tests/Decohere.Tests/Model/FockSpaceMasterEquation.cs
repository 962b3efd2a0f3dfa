using MathNet.Numerics.LinearAlgebra;
using System.Numerics;

namespace Decohere.Tests.Model;

/// <summary>
/// An independent reference: the Lindblad master equation dρ/dt = −i[H, ρ] + Σ (LρL† − ½{L†L, ρ}) for a few
/// bosonic modes in a truncated Fock basis, integrated with classical fourth-order Runge–Kutta. Shares no code
/// with the Gaussian engine; moments are computed as traces against the quadrature operators.
/// </summary>
internal sealed class FockSpaceMasterEquation
{
    private readonly int _cutoff;
    private readonly Matrix<Complex>[] _a;
    public Matrix<Complex> Hamiltonian { get; set; }
    public List<Matrix<Complex>> Jumps { get; } = [];

    public FockSpaceMasterEquation(int modes, int cutoff)
    {
        _cutoff = cutoff;
        int dim = (int)Math.Pow(cutoff, modes);
        var single = Matrix<Complex>.Build.Dense(cutoff, cutoff);
        for (int n = 1; n < cutoff; n++) single[n - 1, n] = Math.Sqrt(n);
        var identity = Matrix<Complex>.Build.DenseIdentity(cutoff);
        _a = new Matrix<Complex>[modes];
        for (int j = 0; j < modes; j++)
        {
            Matrix<Complex> op = j == 0 ? single : identity;
            for (int k = 1; k < modes; k++) op = op.KroneckerProduct(k == j ? single : identity);
            _a[j] = op;
        }
        Hamiltonian = Matrix<Complex>.Build.Dense(dim, dim);
    }

    public Matrix<Complex> A(int mode) => _a[mode];
    public Matrix<Complex> Ad(int mode) => _a[mode].ConjugateTranspose();
    public Matrix<Complex> X(int mode) => (A(mode) + Ad(mode)) / Math.Sqrt(2);
    public Matrix<Complex> P(int mode) => (A(mode) - Ad(mode)) / (Complex.ImaginaryOne * Math.Sqrt(2));

    public void AddDamping(int mode, double gamma, double n)
    {
        Jumps.Add(A(mode) * Math.Sqrt(gamma * (n + 1)));
        if (n > 0) Jumps.Add(Ad(mode) * Math.Sqrt(gamma * n));
    }

    /// <summary>Vacuum in every mode.</summary>
    public Matrix<Complex> Vacuum()
    {
        var rho = Matrix<Complex>.Build.Dense(Hamiltonian.RowCount, Hamiltonian.RowCount);
        rho[0, 0] = 1;
        return rho;
    }

    // With ρ Hermitian and H_eff = H − (i/2)Σ L†L: dρ/dt = −i(H_eff ρ − (H_eff ρ)†) + Σ L (L ρ)†, so only sparse-times-dense
    // products from the left are needed.
    private Matrix<Complex> Derivative(Matrix<Complex> rho, Matrix<Complex> effective, Matrix<Complex>[] jumps)
    {
        var i = Complex.ImaginaryOne;
        var h = effective * rho;
        var d = -i * (h - h.ConjugateTranspose());
        foreach (var l in jumps) d += l * (l * rho).ConjugateTranspose();
        return d;
    }

    /// <summary>RK4 from ρ over time t in n steps.</summary>
    public Matrix<Complex> Evolve(Matrix<Complex> rho, double t, int steps)
    {
        var effective = Hamiltonian.Clone();
        foreach (var l in Jumps) effective -= 0.5 * Complex.ImaginaryOne * (l.ConjugateTranspose() * l);
        effective = Matrix<Complex>.Build.SparseOfMatrix(effective);
        var jumps = Jumps.Select(l => Matrix<Complex>.Build.SparseOfMatrix(l)).ToArray();
        Matrix<Complex> Derivative(Matrix<Complex> r) => this.Derivative(r, effective, jumps);
        double h = t / steps;
        for (int s = 0; s < steps; s++)
        {
            var k1 = Derivative(rho);
            var k2 = Derivative(rho + k1 * (h / 2));
            var k3 = Derivative(rho + k2 * (h / 2));
            var k4 = Derivative(rho + k3 * h);
            rho += (k1 + 2 * k2 + 2 * k3 + k4) * (h / 6);
        }
        return rho;
    }

    /// <summary>Symmetrised covariance V_kl = ½⟨{R_k, R_l}⟩ − ⟨R_k⟩⟨R_l⟩ of R = (x₁, p₁, …).</summary>
    public Matrix<double> Covariance(Matrix<Complex> rho)
    {
        int modes = _a.Length;
        var r = new Matrix<Complex>[2 * modes];
        for (int j = 0; j < modes; j++) { r[2 * j] = X(j); r[2 * j + 1] = P(j); }
        var mean = r.Select(op => (op * rho).Trace().Real).ToArray();
        var v = Matrix<double>.Build.Dense(2 * modes, 2 * modes);
        for (int k = 0; k < 2 * modes; k++)
            for (int l = 0; l < 2 * modes; l++)
                v[k, l] = 0.5 * ((r[k] * r[l] + r[l] * r[k]) * rho).Trace().Real - mean[k] * mean[l];
        return v;
    }

    public int Cutoff => _cutoff;
}

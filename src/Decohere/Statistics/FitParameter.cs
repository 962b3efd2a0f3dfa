
namespace Decohere.Statistics;

/// <summary>Where a fitted parameter may lie; decides the transform the optimiser works on.</summary>
public enum ParameterDomain
{
    /// <summary>Any real value; fitted as is.</summary>
    Real,
    /// <summary>Strictly positive (a linewidth, a frequency); fitted on ln x.</summary>
    Positive,
    /// <summary>Zero or positive (an occupancy, an added noise); fitted on ln x, and x = 0 is tested exactly at the lower end of its interval.</summary>
    NonNegative,
}

/// <summary>One parameter of a maximum-likelihood problem: a name, a starting value and a domain.</summary>
public sealed record FitParameter(string Name, double Start, ParameterDomain Domain)
{
    /// <summary>True when the optimiser works on ln x.</summary>
    public bool IsLogarithmic => Domain != ParameterDomain.Real;

    /// <summary>Natural value → optimiser coordinate.</summary>
    public double ToInternal(double x) => IsLogarithmic ? Math.Log(x) : x;

    /// <summary>Optimiser coordinate → natural value.</summary>
    public double ToNatural(double u) => IsLogarithmic ? Math.Exp(u) : u;

    /// <summary>dx/du at u (the Jacobian of the transform).</summary>
    public double Derivative(double u) => IsLogarithmic ? Math.Exp(u) : 1;
}

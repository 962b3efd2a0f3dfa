namespace Decohere.Statistics;

/// <summary>
/// A fitted or derived quantity: value, standard error and interval (ci_low/ci_high at the fit's confidence).
/// An end not reached by the profile is the domain's bound (0) or unbounded (+∞) and is flagged.
/// </summary>
public sealed record FittedQuantity(string Name, double Value, double StandardError, double Low, double High, bool LowReached, bool HighReached, string Method);

/// <summary>Goodness of fit: the deviance at the optimum against χ² with (statistics − parameters) degrees of freedom.</summary>
public sealed record GoodnessOfFit(double Deviance, int DegreesOfFreedom, double ReducedChiSquare, double PValue);

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>UNIQUAC pure-component structure parameters.</summary>
/// <param name="R">Volume parameter r, above zero.</param>
/// <param name="Q">Surface parameter q, above zero.</param>
public sealed record UniquacComponent(double R, double Q);

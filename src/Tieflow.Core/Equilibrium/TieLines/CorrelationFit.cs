namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>
/// A straight-line fit Y = A + B X by ordinary least squares of a tie-line correlation (natural logarithms).
/// </summary>
/// <param name="A">Intercept.</param>
/// <param name="B">Slope.</param>
/// <param name="RSquared">Coefficient of determination, 1 for points on a line.</param>
/// <param name="PointCount">Number of tie lines fitted.</param>
public sealed record CorrelationFit(double A, double B, double RSquared, int PointCount);

namespace Tieflow.Core.Equilibrium.Distribution;

/// <summary>
/// Equilibrium of the solute between an immiscible diluent and solvent on solute-free ratios:
/// X = solute per unit diluent, Y = solute per unit solvent (kg/kg on a mass basis, kmol/kmol on a mole basis).
/// Either a constant coefficient (Y = k X) or a monotone table of (X, Y) points.
/// </summary>
public sealed class DistributionIsotherm
{
    private DistributionIsotherm(double? k, IReadOnlyList<(double X, double Y)>? points)
    {
        ConstantCoefficient = k;
        Points = points;
    }

    /// <summary>The constant k of Y = k X, or null for a table.</summary>
    public double? ConstantCoefficient { get; }

    /// <summary>The (X, Y) points of a table, ascending in X, or null for a constant k.</summary>
    public IReadOnlyList<(double X, double Y)>? Points { get; }

    /// <summary>Y = k X with k above zero.</summary>
    public static DistributionIsotherm Constant(double k) => new(Preconditions.Positive(k), null);

    /// <summary>A table of points, strictly ascending in X and in Y, X and Y not negative, at least two points.</summary>
    /// <exception cref="ArgumentException">When the points are not strictly ascending or fewer than two.</exception>
    public static DistributionIsotherm Table(IReadOnlyList<(double X, double Y)> points)
    {
        ArgumentNullException.ThrowIfNull(points);
        if (points.Count < 2)
        {
            throw new ArgumentException($"Expected at least two isotherm points, got {points.Count}.", nameof(points));
        }

        for (int i = 0; i < points.Count; i++)
        {
            Preconditions.NonNegative(points[i].X, $"isotherm[{i}].X");
            Preconditions.NonNegative(points[i].Y, $"isotherm[{i}].Y");
            if (i > 0 && (points[i].X <= points[i - 1].X || points[i].Y <= points[i - 1].Y))
            {
                throw new ArgumentException($"isotherm[{i}] must have X and Y above those of isotherm[{i - 1}] (the isotherm must rise).", nameof(points));
            }
        }

        return new DistributionIsotherm(null, points.ToArray());
    }
}

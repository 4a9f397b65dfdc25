namespace Tieflow.Core.Chemistry;

/// <summary>
/// Fractions (or amounts) of the three components of an extraction system, ordered by role.
/// A plain value: it does not check that the parts sum to one, so that it can also carry component flows
/// and intermediate results in hot loops. Use <see cref="Normalized"/> and <see cref="Sum"/> where that matters.
/// </summary>
/// <param name="Solute">Solute part.</param>
/// <param name="Diluent">Diluent part.</param>
/// <param name="Solvent">Solvent part.</param>
public readonly record struct Ternary(double Solute, double Diluent, double Solvent)
{
    /// <summary>The part at index 0 (solute), 1 (diluent) or 2 (solvent).</summary>
    public double this[int index] => index switch
    {
        0 => Solute,
        1 => Diluent,
        2 => Solvent,
        _ => throw new ArgumentOutOfRangeException(nameof(index), index, "Expected 0 (solute), 1 (diluent) or 2 (solvent)."),
    };

    /// <summary>The part of the component with this role.</summary>
    public double this[ComponentRole role] => this[(int)role];

    /// <summary>Sum of the three parts.</summary>
    public double Sum => Solute + Diluent + Solvent;

    /// <summary>The same proportions scaled to sum to one. Throws when the sum is not above zero.</summary>
    public Ternary Normalized()
    {
        double sum = Sum;
        if (!(sum > 0) || !double.IsFinite(sum))
        {
            throw new InvalidOperationException($"Cannot normalise {this}: the parts must have a finite sum above zero.");
        }

        return new Ternary(Solute / sum, Diluent / sum, Solvent / sum);
    }

    /// <summary>Component-wise sum.</summary>
    public static Ternary operator +(Ternary a, Ternary b) => new(a.Solute + b.Solute, a.Diluent + b.Diluent, a.Solvent + b.Solvent);

    /// <summary>Component-wise difference.</summary>
    public static Ternary operator -(Ternary a, Ternary b) => new(a.Solute - b.Solute, a.Diluent - b.Diluent, a.Solvent - b.Solvent);

    /// <summary>Scaling of every part.</summary>
    public static Ternary operator *(double factor, Ternary a) => new(factor * a.Solute, factor * a.Diluent, factor * a.Solvent);

    /// <summary>Scaling of every part.</summary>
    public static Ternary operator *(Ternary a, double factor) => factor * a;

    /// <summary>Largest absolute component-wise difference.</summary>
    public static double MaxDifference(Ternary a, Ternary b) =>
        Math.Max(Math.Abs(a.Solute - b.Solute), Math.Max(Math.Abs(a.Diluent - b.Diluent), Math.Abs(a.Solvent - b.Solvent)));

    /// <summary>Builds a value from three parts in role order.</summary>
    public static Ternary FromSpan(ReadOnlySpan<double> parts)
    {
        Preconditions.SameLength(parts.Length, 3);
        return new Ternary(parts[0], parts[1], parts[2]);
    }
}

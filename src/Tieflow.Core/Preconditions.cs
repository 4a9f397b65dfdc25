using System.Runtime.CompilerServices;

namespace Tieflow.Core;

/// <summary>Argument checks for public entry points of the core: finite numbers, fractions, matching lengths.</summary>
public static class Preconditions
{
    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> unless <paramref name="value"/> is finite.</summary>
    public static double Finite(double value, [CallerArgumentExpression(nameof(value))] string? name = null)
    {
        if (!double.IsFinite(value))
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a finite number.");
        }

        return value;
    }

    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> unless <paramref name="value"/> is finite and not negative.</summary>
    public static double NonNegative(double value, [CallerArgumentExpression(nameof(value))] string? name = null)
    {
        if (!double.IsFinite(value) || value < 0)
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a finite number that is zero or more.");
        }

        return value;
    }

    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> unless <paramref name="value"/> is finite and above zero.</summary>
    public static double Positive(double value, [CallerArgumentExpression(nameof(value))] string? name = null)
    {
        if (!double.IsFinite(value) || value <= 0)
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a finite number above zero.");
        }

        return value;
    }

    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> unless <paramref name="value"/> lies in [0, 1].</summary>
    public static double Fraction(double value, [CallerArgumentExpression(nameof(value))] string? name = null)
    {
        if (!double.IsFinite(value) || value < 0 || value > 1)
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a fraction between 0 and 1.");
        }

        return value;
    }

    /// <summary>Throws <see cref="ArgumentException"/> unless the two lengths are equal.</summary>
    public static void SameLength(int length, int expected, [CallerArgumentExpression(nameof(length))] string? name = null)
    {
        if (length != expected)
        {
            throw new ArgumentException($"Expected {expected} items, got {length}.", name);
        }
    }
}

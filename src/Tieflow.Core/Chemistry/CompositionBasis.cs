namespace Tieflow.Core.Chemistry;

/// <summary>How fractions and flows are counted: mass fractions with kg/h, or mole fractions with kmol/h.</summary>
public enum CompositionBasis
{
    /// <summary>Mass fractions; flows in kg/h.</summary>
    Mass,

    /// <summary>Mole fractions; flows in kmol/h.</summary>
    Mole,
}

/// <summary>The units that go with a basis: the one place that says which flow unit a basis counts in.</summary>
public static class CompositionBasisUnits
{
    /// <summary>The flow unit of a basis: kg/h on a mass basis, kmol/h on a mole basis.</summary>
    public static string FlowUnit(this CompositionBasis basis) => basis switch
    {
        CompositionBasis.Mass => "kg/h",
        CompositionBasis.Mole => "kmol/h",
        _ => throw new ArgumentOutOfRangeException(nameof(basis), basis, "Unknown composition basis."),
    };
}

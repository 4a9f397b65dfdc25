namespace Tieflow.Core.Chemistry;

/// <summary>How fractions and flows are counted: mass fractions with kg/h, or mole fractions with kmol/h.</summary>
public enum CompositionBasis
{
    /// <summary>Mass fractions; flows in kg/h.</summary>
    Mass,

    /// <summary>Mole fractions; flows in kmol/h.</summary>
    Mole,
}

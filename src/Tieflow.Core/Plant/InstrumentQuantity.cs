namespace Tieflow.Core.Plant;

/// <summary>What an instrument measures.</summary>
public enum InstrumentQuantity
{
    /// <summary>Flow of a stream (kg/h on a mass basis, kmol/h on a mole basis, after conversion).</summary>
    Flow,

    /// <summary>Fraction of one component of a stream on the system's basis (an online analyzer).</summary>
    Fraction,

    /// <summary>Temperature of a stage (kelvin, after conversion).</summary>
    Temperature,
}

namespace Tieflow.Core.Plant;

/// <summary>Which of a unit's streams a <see cref="UnitStream"/> is.</summary>
public enum StreamPhase
{
    /// <summary>The feed entering stage 1.</summary>
    Feed,

    /// <summary>The fresh solvent (entering stage N counter-current, every stage cross-current).</summary>
    Solvent,

    /// <summary>A raffinate leaving a stage.</summary>
    Raffinate,

    /// <summary>An extract leaving a stage, or the combined extract of a cross-current unit.</summary>
    Extract,
}

namespace Tieflow.Core.Monitoring;

/// <summary>Settings of the window reconciliation. Defaults are common practice, no source.</summary>
public sealed record WindowReconcilerSettings
{
    /// <summary>Significance of the global and measurement tests.</summary>
    public double Significance { get; init; } = 0.05;

    /// <summary>Uncertainty of the binodal (the minor fraction of a saturated phase at a given solute fraction), absolute fraction.</summary>
    public double EnvelopeSigma { get; init; } = 5e-4;

    /// <summary>Uncertainty of a fresh solvent's or feed's minor fractions taken from the nominal operation, absolute fraction.</summary>
    public double KnownCompositionSigma { get; init; } = 2e-4;

    /// <summary>Most outer iterations that move the envelope conditions to the estimates.</summary>
    public int MaxEnvelopeIterations { get; init; } = 8;

    /// <summary>The outer iteration stops when no solute estimate moves by more than this.</summary>
    public double EnvelopeTolerance { get; init; } = 1e-7;

    /// <summary>A stage efficiency whose sigma exceeds this is "not determinable".</summary>
    public double NotDeterminableSigma { get; init; } = 0.25;
}

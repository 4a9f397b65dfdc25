namespace Tieflow.Core.Cascade;

/// <summary>How a cascade calculation ended.</summary>
public enum CascadeStatus
{
    /// <summary>Every balance and efficiency relation holds within the tolerance.</summary>
    Converged,

    /// <summary>The iteration limit was reached first; the streams are the last iterate.</summary>
    IterationLimit,
}

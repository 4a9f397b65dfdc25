namespace Tieflow.Core.Cascade;

/// <summary>
/// A design specification that no cascade can meet: a target beyond what infinitely many stages reach at the given
/// solvent, a solvent flow below the minimum, a mixture that stays one phase, or a target above the feed's content.
/// The message says what to change (for example "raise the solvent flow above 123.4 kg/h or relax the target to 0.05").
/// </summary>
public sealed class InfeasibleSpecificationException : Exception
{
    /// <summary>Creates the exception with a message that says what to change.</summary>
    public InfeasibleSpecificationException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the cause.</summary>
    public InfeasibleSpecificationException(string message, Exception innerException)
        : base(message, innerException)
    {
    }

    /// <summary>Creates the exception without a message (prefer the other constructors).</summary>
    public InfeasibleSpecificationException()
    {
    }
}

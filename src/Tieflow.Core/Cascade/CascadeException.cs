namespace Tieflow.Core.Cascade;

/// <summary>
/// A stage or cascade calculation that could not be done: a stage mixture that stays one liquid phase, a balance
/// that did not converge, or an outlet outside the model's data. The message says which stage and what to change.
/// </summary>
public sealed class CascadeException : Exception
{
    /// <summary>Creates the exception with a message that says what failed, where, and what to change.</summary>
    public CascadeException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the cause.</summary>
    public CascadeException(string message, Exception innerException)
        : base(message, innerException)
    {
    }

    /// <summary>Creates the exception without a message (prefer the other constructors).</summary>
    public CascadeException()
    {
    }
}

namespace Tieflow.Core.Reconciliation;

/// <summary>A reconciliation that did not converge; the message says what, after how many iterations, and the residual.</summary>
public sealed class ReconciliationException : Exception
{
    /// <summary>Creates the exception with a message that says what failed and from where.</summary>
    public ReconciliationException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the cause.</summary>
    public ReconciliationException(string message, Exception innerException)
        : base(message, innerException)
    {
    }

    /// <summary>Creates the exception without a message (prefer the other constructors).</summary>
    public ReconciliationException()
    {
    }
}

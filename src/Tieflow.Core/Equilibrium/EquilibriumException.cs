namespace Tieflow.Core.Equilibrium;

/// <summary>An equilibrium calculation that did not converge or was asked for something the model cannot give.</summary>
public sealed class EquilibriumException : Exception
{
    /// <summary>Creates the exception with a message that says what failed and from where.</summary>
    public EquilibriumException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the cause.</summary>
    public EquilibriumException(string message, Exception innerException)
        : base(message, innerException)
    {
    }

    /// <summary>Creates the exception without a message (prefer the other constructors).</summary>
    public EquilibriumException()
    {
    }
}

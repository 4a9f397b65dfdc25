namespace Tieflow.Core.Dynamics;

/// <summary>The dynamic model reached a state it cannot continue from (one liquid phase in a stage, no extract that closes a stage); the simulator exits with code 1.</summary>
public sealed class SimulationException : Exception
{
    /// <summary>Creates the exception with a message that says what the model met.</summary>
    public SimulationException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the failure that caused it.</summary>
    public SimulationException(string message, Exception inner)
        : base(message, inner)
    {
    }
}

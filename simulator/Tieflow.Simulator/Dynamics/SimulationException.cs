namespace Tieflow.Simulator.Dynamics;

/// <summary>The simulated plant reached a state the model cannot continue from (one liquid phase in a stage, no extract that closes a stage). Exit code 1.</summary>
public sealed class SimulationException : Exception
{
    public SimulationException(string message)
        : base(message)
    {
    }

    public SimulationException(string message, Exception inner)
        : base(message, inner)
    {
    }
}

namespace Tieflow.Service.Monitor;

/// <summary>How a run ended, set by whichever part of the host failed; the command turns it into the exit code.</summary>
internal sealed class RunOutcome
{
    private int _exitCode;

    public int ExitCode => Volatile.Read(ref _exitCode);

    public string? Message { get; private set; }

    /// <summary>Records the first failure (later ones are consequences).</summary>
    public void Fail(int exitCode, string message)
    {
        if (Interlocked.CompareExchange(ref _exitCode, exitCode, 0) == 0)
        {
            Message = message;
        }
    }
}

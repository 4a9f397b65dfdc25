namespace Tieflow.Service.Cli;

/// <summary>A failure of a <c>tieflow ua</c> command with the exit code it ends with (2 bad usage, 3 server unreachable).</summary>
internal sealed class UaCliException(int exitCode, string message) : Exception(message)
{
    public int ExitCode { get; } = exitCode;
}

namespace Tieflow.Service.Sources;

/// <summary>
/// A source's configuration can never work (bad settings, a plant whose nodes the server does not have, an untrusted
/// server certificate, a server that stayed unreachable through every allowed attempt): the host ends with
/// <see cref="ExitCode"/> (2 bad configuration, 3 runtime failure) and prints <see cref="Exception.Message"/>.
/// </summary>
internal sealed class SignalSourceException : Exception
{
    public SignalSourceException(int exitCode, string message, Exception? inner = null)
        : base(message, inner)
    {
        ExitCode = exitCode;
    }

    /// <summary>The process exit code the host should end with (<see cref="Cli.ExitCodes"/>).</summary>
    public int ExitCode { get; }
}

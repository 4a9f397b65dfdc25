namespace Tieflow.Service.Cli;

/// <summary>An option value that cannot be used (exit 2); <see cref="CommandRunner"/> reports it as "error: message".</summary>
internal sealed class CliUsageException(string message) : Exception(message);

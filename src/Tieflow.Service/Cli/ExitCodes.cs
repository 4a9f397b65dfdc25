namespace Tieflow.Service.Cli;

/// <summary>Exit codes of every command (docs/file-formats.md).</summary>
internal static class ExitCodes
{
    /// <summary>Success.</summary>
    public const int Success = 0;

    /// <summary>The computation could not be done (no convergence, infeasible specification).</summary>
    public const int ComputationFailed = 1;

    /// <summary>Bad input: usage, an unreadable or invalid file.</summary>
    public const int BadInput = 2;

    /// <summary>Runtime failure: I/O, a server unreachable after retries.</summary>
    public const int RuntimeFailure = 3;
}

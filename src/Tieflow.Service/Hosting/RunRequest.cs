namespace Tieflow.Service.Hosting;

/// <summary>What <c>tieflow run</c> was asked to do.</summary>
/// <param name="SettingsFile">--settings FILE, or null for the embedded default (the simulated demo train).</param>
/// <param name="StoreFile">--store FILE: the SQLite store to write, overriding the settings' store.</param>
/// <param name="MaxRuntime">--max-runtime: stop cleanly after this much clock time.</param>
/// <param name="WorkingDirectory">The working directory (relative paths of the embedded default resolve against it).</param>
/// <param name="HostArgs">Further command-line settings for the host (<c>--Tieflow:Source:Speed=600</c>).</param>
/// <param name="Output">Where the console summary goes.</param>
/// <param name="Terminal">True when <paramref name="Output"/> is a terminal: a live display instead of periodic lines.</param>
internal sealed record RunRequest(
    string? SettingsFile,
    string? StoreFile,
    TimeSpan? MaxRuntime,
    string WorkingDirectory,
    IReadOnlyList<string> HostArgs,
    TextWriter Output,
    bool Terminal)
{
    /// <summary>Interval of the plain summary lines.</summary>
    public TimeSpan SummaryInterval { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>The environment the secrets are read from (tests give their own).</summary>
    public Func<string, string?> Environment { get; init; } = System.Environment.GetEnvironmentVariable;
}

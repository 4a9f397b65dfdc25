using Tieflow.OpcUa.Security;
using Tieflow.Service.Hosting;

namespace Tieflow.Service.Sources;

/// <summary>
/// Settings of the OPC UA source (section <c>Tieflow:Source</c> when its <c>Kind</c> is <c>opcua</c>); the host binds
/// them. The password of <see cref="User"/> never is a setting: it comes from the environment variable
/// <c>TIEFLOW_OPCUA_PASSWORD</c>.
/// </summary>
internal sealed class OpcUaSourceOptions
{
    /// <summary>The plant server's endpoint, <c>opc.tcp://host:port[/path]</c> (required).</summary>
    public string? Endpoint { get; set; }

    /// <summary>The user to log in as; null for anonymous.</summary>
    public string? User { get; set; }

    /// <summary><c>None</c>, <c>Sign</c> or <c>SignAndEncrypt</c>, optionally <c>:POLICY</c>; null for the most secure endpoint the server offers.</summary>
    public string? Security { get; set; }

    /// <summary>The certificate store folder (<c>own/</c>, <c>trusted/</c>, <c>rejected/</c>); null for the user's default store.</summary>
    public string? Pki { get; set; }

    /// <summary>How often the server samples each node (default 1 s).</summary>
    public TimeSpan SamplingInterval { get; set; } = TimeSpan.FromSeconds(1);

    /// <summary>How often the server sends the changes it sampled (default 1 s).</summary>
    public TimeSpan PublishingInterval { get; set; } = TimeSpan.FromSeconds(1);

    /// <summary>
    /// Longest the server may stay silent when nothing changes (default 5 s): it then sends a keep-alive. A server
    /// silent for 1.5 times this and a margin counts as lost.
    /// </summary>
    public TimeSpan KeepAliveInterval { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>First delay between attempts of the first connection, doubled each time (default 1 s).</summary>
    public TimeSpan ConnectRetryDelay { get; set; } = TimeSpan.FromSeconds(1);

    /// <summary>Longest delay between attempts of the first connection (default 30 s).</summary>
    public TimeSpan ConnectRetryMaxDelay { get; set; } = TimeSpan.FromSeconds(30);

    /// <summary>Attempts of the first connection before the source gives up with exit 3; 0 (the default) keeps trying.</summary>
    public int ConnectAttempts { get; set; }

    /// <summary>
    /// False (the default): instruments whose nodes the server does not have are listed and the others are watched
    /// (the source starts degraded). True: any missing node stops the source with exit 2.
    /// </summary>
    public bool RequireAllNodes { get; set; }

    /// <summary>Every problem of the settings, each naming its key path and what was expected; empty when they can be used.</summary>
    public IReadOnlyList<string> Problems()
    {
        var problems = new List<string>();
        if (string.IsNullOrWhiteSpace(Endpoint))
        {
            problems.Add($"{SettingsKeys.SourceEndpoint}: missing; expected the plant server's URL, opc.tcp://HOST:PORT[/path]");
        }
        else if (!Uri.TryCreate(Endpoint, UriKind.Absolute, out Uri? uri) || !string.Equals(uri.Scheme, "opc.tcp", StringComparison.OrdinalIgnoreCase) || uri.Host.Length == 0 || uri.Port <= 0)
        {
            problems.Add($"{SettingsKeys.SourceEndpoint}: '{Endpoint}' is not an OPC UA URL; expected opc.tcp://HOST:PORT[/path]");
        }

        if (User is not null && string.IsNullOrWhiteSpace(User))
        {
            problems.Add($"{SettingsKeys.SourceUser}: empty; expected a user name, or leave the key out for anonymous access");
        }

        if (Security is not null)
        {
            try
            {
                UaSecurity.Parse(Security);
            }
            catch (FormatException e)
            {
                problems.Add($"{SettingsKeys.SourceSecurity}: {e.Message}");
            }
        }

        Range(problems, SettingsKeys.SourceSamplingInterval, SamplingInterval, TimeSpan.FromMilliseconds(10), TimeSpan.FromHours(1));
        Range(problems, SettingsKeys.SourcePublishingInterval, PublishingInterval, TimeSpan.FromMilliseconds(50), TimeSpan.FromHours(1));
        Range(problems, SettingsKeys.SourceKeepAliveInterval, KeepAliveInterval, TimeSpan.FromMilliseconds(100), TimeSpan.FromHours(1));
        if (KeepAliveInterval < PublishingInterval)
        {
            problems.Add($"{SettingsKeys.SourceKeepAliveInterval}: {KeepAliveInterval} is shorter than {SettingsKeys.SourcePublishingInterval} ({PublishingInterval}); expected at least the publishing interval");
        }

        Range(problems, SettingsKeys.SourceConnectRetryDelay, ConnectRetryDelay, TimeSpan.FromMilliseconds(10), TimeSpan.FromHours(1));
        Range(problems, SettingsKeys.SourceConnectRetryMaxDelay, ConnectRetryMaxDelay, TimeSpan.FromMilliseconds(10), TimeSpan.FromHours(1));
        if (ConnectRetryMaxDelay < ConnectRetryDelay)
        {
            problems.Add($"{SettingsKeys.SourceConnectRetryMaxDelay}: {ConnectRetryMaxDelay} is shorter than {SettingsKeys.SourceConnectRetryDelay} ({ConnectRetryDelay})");
        }

        if (ConnectAttempts < 0)
        {
            problems.Add($"{SettingsKeys.SourceConnectAttempts}: {ConnectAttempts}; expected 0 (keep trying) or a positive number of attempts");
        }

        return problems;
    }

    private static void Range(List<string> problems, string key, TimeSpan value, TimeSpan low, TimeSpan high)
    {
        if (value < low || value > high)
        {
            problems.Add($"{key}: {value} is out of range; expected {low} to {high}");
        }
    }
}

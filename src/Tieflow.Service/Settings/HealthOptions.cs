namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow:Health</c>: the health and status endpoints, on loopback only.</summary>
internal sealed class HealthOptions
{
    /// <summary>The section's key path.</summary>
    public const string Section = "Tieflow:Health";

    /// <summary>Port when the settings name none.</summary>
    public const int DefaultPort = 7281;

    /// <summary><c>Enabled</c>: serve <c>/health</c> and <c>/status</c> (default true).</summary>
    public bool Enabled { get; set; } = true;

    /// <summary><c>Port</c>: the loopback port; 0 takes a free port.</summary>
    public int Port { get; set; } = DefaultPort;
}

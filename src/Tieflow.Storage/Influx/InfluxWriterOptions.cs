namespace Tieflow.Storage.Influx;

/// <summary>Where and how to write to InfluxDB (v2 write API: InfluxDB 1.8+, 2.x, 3.x, and servers that accept it).</summary>
public sealed class InfluxWriterOptions
{
    /// <summary>Base address of the server, e.g. <c>http://127.0.0.1:8086</c>.</summary>
    public required string Url { get; init; }

    public required string Org { get; init; }

    public required string Bucket { get; init; }

    /// <summary>The API token (from <c>TIEFLOW_INFLUX_TOKEN</c>); empty for a server without authentication. Never logged.</summary>
    public string Token { get; init; } = string.Empty;

    /// <summary>Time one write may take before it counts as failed.</summary>
    public TimeSpan Timeout { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>Compresses request bodies with gzip.</summary>
    public bool Gzip { get; init; } = true;
}

namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow:Store</c>: where the records go.</summary>
internal sealed class StoreOptions
{
    /// <summary>The section's key path.</summary>
    public const string Section = "Tieflow:Store";

    /// <summary>Kind of the embedded store.</summary>
    public const string Sqlite = "sqlite";

    /// <summary>Kind of the InfluxDB store (with its outbox).</summary>
    public const string InfluxDb = "influxdb";

    /// <summary>Environment variable that holds the InfluxDB token (never a settings key, never logged).</summary>
    public const string TokenVariable = "TIEFLOW_INFLUX_TOKEN";

    /// <summary><c>Kind</c>: <c>sqlite</c> (default) or <c>influxdb</c>.</summary>
    public string Kind { get; set; } = Sqlite;

    /// <summary>The SQLite file when the settings name none, relative to the working directory.</summary>
    public const string DefaultPath = "tieflow-data/tieflow.db";

    /// <summary><c>Path</c>: the SQLite file (sqlite); <see cref="DefaultPath"/> under the working directory when absent.</summary>
    public string? Path { get; set; }

    /// <summary><c>Url</c>: the InfluxDB server (influxdb).</summary>
    public string? Url { get; set; }

    /// <summary><c>Org</c>: the InfluxDB organisation (influxdb).</summary>
    public string? Org { get; set; }

    /// <summary><c>Bucket</c>: the InfluxDB bucket (influxdb).</summary>
    public string? Bucket { get; set; }

    /// <summary><c>OutboxPath</c>: the SQLite outbox file (influxdb).</summary>
    public string? OutboxPath { get; set; }

    /// <summary><c>OutboxMaxBytes</c>: the outbox's size limit in bytes (influxdb); 256 MiB when absent.</summary>
    public long? OutboxMaxBytes { get; set; }

    /// <summary><c>Gzip</c>: compress the write requests to InfluxDB (influxdb); true when absent.</summary>
    public bool Gzip { get; set; } = true;

    /// <summary><c>WriteSignals</c>: also write every validated sample (<c>tieflow_signal</c>).</summary>
    public bool WriteSignals { get; set; }
}

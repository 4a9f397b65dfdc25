namespace Tieflow.Storage.Outbox;

/// <summary>Settings of the durable outbox in front of InfluxDB (<c>Tieflow:Store:OutboxPath</c>, <c>OutboxMaxBytes</c>).</summary>
public sealed class OutboxOptions
{
    /// <summary>The outbox's SQLite file; its folder is created when missing.</summary>
    public required string Path { get; init; }

    /// <summary>The site name every point is tagged with.</summary>
    public required string Site { get; init; }

    /// <summary>
    /// Line protocol bytes the outbox holds at most before it drops the oldest signal samples. Alerts and analysis
    /// records are never dropped: when they alone exceed the limit the outbox keeps them and reports itself overfull.
    /// </summary>
    public long MaxBytes { get; init; } = 256L * 1024 * 1024;

    /// <summary>Once shedding, the outbox reports normal again when what it holds falls below this share of <see cref="MaxBytes"/>.</summary>
    public double ClearBelowFraction { get; init; } = 0.5;

    /// <summary>True (the default) syncs the log at every commit, so an acknowledged record survives a power loss.</summary>
    public bool SyncEveryCommit { get; init; } = true;
}

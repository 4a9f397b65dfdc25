namespace Tieflow.Storage.Sqlite;

/// <summary>Settings of the embedded SQLite store.</summary>
public sealed class SqliteStoreOptions
{
    /// <summary>The database file; its folder is created when missing.</summary>
    public required string Path { get; init; }

    /// <summary>The site name every point is tagged with (the plant file's <c>site</c>).</summary>
    public required string Site { get; init; }

    /// <summary>Points older than this before the newest point written (or the clock, when that is earlier) are deleted; null keeps them.</summary>
    public TimeSpan? MaxAge { get; init; }

    /// <summary>When the data takes more than this many bytes of the file, the oldest points go until it takes 90 % of it; null for no limit.</summary>
    public long? MaxBytes { get; init; }

    /// <summary>
    /// True (the default) syncs the write-ahead log at every commit, so an acknowledged batch survives a power loss;
    /// false survives a crash of the process only, and is faster.
    /// </summary>
    public bool SyncEveryCommit { get; init; } = true;
}

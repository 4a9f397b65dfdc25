namespace Tieflow.Storage.Sqlite;

/// <summary>What an embedded store holds: its time span, point counts per measurement, the latest point of each series, and the alerts.</summary>
public sealed record StoreSummary(
    DateTimeOffset? From,
    DateTimeOffset? To,
    IReadOnlyDictionary<string, long> Counts,
    IReadOnlyList<StoredPoint> Latest,
    IReadOnlyList<StoredPoint> Alerts);

namespace Tieflow.Storage.Outbox;

/// <summary>The alert the outbox raises while it drops signal samples.</summary>
public static class OutboxAlerts
{
    /// <summary>Alert kind of a full outbox (beyond the analysis kinds of docs/stores.md).</summary>
    public const string Kind = "store-backlog";
}

namespace Tieflow.Storage.Outbox;

/// <summary>One point waiting in the outbox: its sequence number and its line of line protocol.</summary>
public readonly record struct OutboxEntry(long Id, string Line);

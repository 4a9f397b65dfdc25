namespace Tieflow.OpcUa.Client;

/// <summary>
/// The plant was not observed live between <see cref="From"/> and <see cref="To"/> (client clock, UTC): the connection
/// was lost or the server fell silent, the subscription had to be recreated, the server could not republish a missed
/// message, or the reader fell behind and queued events were dropped (<see cref="DroppedEvents"/>). A store should mark the interval. When the session survived and the server's queued notifications were
/// republished, <see cref="NotificationsMayBeMissing"/> is false: the stream is complete, but values reached the client
/// late and a silent or frozen server may not have sampled at all in the interval.
/// </summary>
/// <param name="From">Last time the subscription was known to be complete.</param>
/// <param name="To">When notifications flowed again.</param>
/// <param name="Reason">Why (readable).</param>
public sealed record UaDataGap(DateTime From, DateTime To, string Reason) : UaSubscriptionEvent
{
    /// <summary>True (the default) when notifications of the interval may be lost; false when the server republished everything it had queued.</summary>
    public bool NotificationsMayBeMissing { get; init; } = true;

    /// <summary>Events dropped from the subscription's queue because its reader fell behind (0 for a gap of the connection).</summary>
    public long DroppedEvents { get; init; }
}

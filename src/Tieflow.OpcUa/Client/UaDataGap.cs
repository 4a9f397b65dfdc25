namespace Tieflow.OpcUa.Client;

/// <summary>
/// Notifications may be missing between <see cref="From"/> and <see cref="To"/> (client clock, UTC): the connection
/// was lost, the subscription had to be recreated, or the server could not republish a missed message. A store
/// should mark the interval.
/// </summary>
/// <param name="From">Last time the subscription was known to be complete.</param>
/// <param name="To">When notifications flowed again.</param>
/// <param name="Reason">Why (readable).</param>
public sealed record UaDataGap(DateTime From, DateTime To, string Reason) : UaSubscriptionEvent;

using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>A new value of a monitored node.</summary>
/// <param name="Key">The caller's key of the node.</param>
/// <param name="Node">The node as requested.</param>
/// <param name="Value">The value.</param>
/// <param name="Status">Its status as sent by the server (Good, Uncertain..., Bad...).</param>
/// <param name="SourceTime">When the source produced it (UTC), or <see cref="DateTime.MinValue"/> when the server sent none.</param>
/// <param name="ServerTime">The server timestamp (UTC; diagnostic only), or <see cref="DateTime.MinValue"/>.</param>
public sealed record UaDataChange(string Key, ExpandedNodeId Node, Variant Value, StatusCode Status, DateTime SourceTime, DateTime ServerTime) : UaSubscriptionEvent;

using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>How the server took one monitored node.</summary>
/// <param name="Key">The caller's key.</param>
/// <param name="Node">The node as requested.</param>
/// <param name="Status">Good, or the per-item error (BadNodeIdUnknown, BadMonitoredItemFilterUnsupported, BadDeadbandFilterInvalid, BadFilterNotAllowed...).</param>
/// <param name="RevisedSamplingInterval">The sampling interval the server chose.</param>
/// <param name="RevisedQueueSize">The queue size the server chose.</param>
public sealed record MonitoredNodeResult(string Key, ExpandedNodeId Node, StatusCode Status, TimeSpan RevisedSamplingInterval, uint RevisedQueueSize);

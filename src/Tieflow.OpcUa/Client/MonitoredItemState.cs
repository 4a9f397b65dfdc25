using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>Client-side state of one monitored node: the request, the namespace URI it is bound to, and the server's answer.</summary>
internal sealed class MonitoredItemState(MonitoredNode request, string key, uint clientHandle)
{
    public MonitoredNode Request { get; } = request;

    public string Key { get; } = key;

    public uint ClientHandle { get; } = clientHandle;

    /// <summary>The namespace URI of the node, bound at the first resolution; null for namespace 0.</summary>
    public string? NamespaceUri { get; set; }

    public bool NamespaceBound { get; set; }

    public uint MonitoredItemId { get; set; }

    public StatusCode Status { get; set; } = StatusCodes.BadWaitingForInitialData;

    public TimeSpan RevisedSamplingInterval { get; set; }

    public uint RevisedQueueSize { get; set; }
}

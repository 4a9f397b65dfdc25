using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>
/// A node to monitor. Give the node as <c>nsu=&lt;namespace URI&gt;;s=...</c> to survive namespace index changes; a
/// node given by index is bound to that index's URI at the first connection and re-resolved by URI after every
/// reconnect.
/// </summary>
public sealed record MonitoredNode
{
    /// <summary>The node whose Value attribute is monitored.</summary>
    public required ExpandedNodeId Node { get; init; }

    /// <summary>The caller's name for the node, passed back with every notification (default: the node's text form).</summary>
    public string? Key { get; init; }

    /// <summary>Requested sampling interval; null uses the publishing interval.</summary>
    public TimeSpan? SamplingInterval { get; init; }

    /// <summary>Requested queue size on the server (default 1: only the latest value).</summary>
    public uint QueueSize { get; init; } = 1;

    /// <summary>Deadband kind (default none).</summary>
    public DeadbandType DeadbandType { get; init; } = DeadbandType.None;

    /// <summary>Deadband value: engineering units for Absolute, percent of the EURange (0-100) for Percent.</summary>
    public double DeadbandValue { get; init; }

    /// <summary>What counts as a change (default status or value).</summary>
    public DataChangeTrigger Trigger { get; init; } = DataChangeTrigger.StatusValue;
}

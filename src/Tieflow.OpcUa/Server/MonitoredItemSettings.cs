namespace Tieflow.OpcUa.Server;

/// <summary>The revised parameters of a monitored item.</summary>
/// <param name="ClientHandle">The client's handle, echoed in every notification.</param>
/// <param name="SamplingIntervalMs">Revised sampling interval in milliseconds.</param>
/// <param name="QueueSize">Revised queue size (at least 1).</param>
/// <param name="DiscardOldest">Which end of a full queue is dropped.</param>
/// <param name="TimestampsToReturn">0 Source, 1 Server, 2 Both, 3 Neither.</param>
/// <param name="Filter">The data change filter, or null for the default (trigger StatusValue, no deadband).</param>
internal sealed record MonitoredItemSettings(
    uint ClientHandle,
    double SamplingIntervalMs,
    uint QueueSize,
    bool DiscardOldest,
    int TimestampsToReturn,
    DataChangeSettings? Filter);

using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>A variable node: its current value and the attributes of a variable (OPC 10000-3 §5.6).</summary>
internal sealed class ServerVariable : ServerNode
{
    private readonly List<ServerMonitoredItem> _watchers = [];

    public ServerVariable(NodeId nodeId, QualifiedName browseName, LocalizedText displayName, NodeId dataType, DataValue value)
        : base(nodeId, ServerNodeClass.Variable, browseName, displayName)
    {
        DataType = dataType;
        Value = value;
    }

    public NodeId DataType { get; }

    /// <summary>-1 for a scalar, 1 for a one-dimensional array.</summary>
    public int ValueRank { get; init; } = -1;

    /// <summary>Fastest sampling this variable supports, in milliseconds (0: any rate).</summary>
    public double MinimumSamplingIntervalMs { get; init; }

    /// <summary>CurrentRead (1): the server never accepts writes.</summary>
    public byte AccessLevel { get; init; } = 1;

    /// <summary>For an AnalogItem, the EURange (low, high) used by percent deadbands; null otherwise.</summary>
    public (double Low, double High)? EngineeringUnitsRange { get; init; }

    /// <summary>When set, the value is computed on every read and sample (ServerStatus.CurrentTime and the like).</summary>
    public Func<DataValue>? ValueSource { get; init; }

    /// <summary>The current value; the setter is used under the server's lock.</summary>
    public DataValue Value { get; private set; }

    /// <summary>The current value, computed when <see cref="ValueSource"/> is set.</summary>
    public DataValue CurrentValue => ValueSource is { } source ? source() : Value;

    /// <summary>True when the value is a number, so that deadbands apply.</summary>
    public bool IsNumeric => DataType.NamespaceIndex == 0 && DataType.IdType == NodeIdType.Numeric &&
        DataType.NumericIdentifier is (>= 2 and <= 11) or 26 or 27 or 28 && ValueRank == -1;

    /// <summary>Replaces the value and tells the monitored items that watch it (called under the server's lock).</summary>
    public void SetValue(DataValue value, DateTime now)
    {
        Value = value;
        foreach (var watcher in _watchers)
        {
            watcher.OnValueChanged(value, now);
        }
    }

    public void AddWatcher(ServerMonitoredItem item) => _watchers.Add(item);

    public void RemoveWatcher(ServerMonitoredItem item) => _watchers.Remove(item);
}

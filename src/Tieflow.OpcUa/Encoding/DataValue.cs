namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// A value with its status and timestamps (OPC 10000-6 §5.2.2.17). Absent timestamps are
/// <see cref="DateTime.MinValue"/>; timestamps are UTC; picoseconds (0-9999) refine a timestamp below 100 ns.
/// </summary>
public sealed class DataValue
{
    /// <summary>The value (an empty Variant when absent).</summary>
    public Variant Value { get; init; }

    /// <summary>The status (Good when absent on the wire).</summary>
    public StatusCode Status { get; init; }

    /// <summary>When the source produced the value (UTC), or <see cref="DateTime.MinValue"/>.</summary>
    public DateTime SourceTimestamp { get; init; }

    /// <summary>Picoseconds (0-9999) beyond <see cref="SourceTimestamp"/>.</summary>
    public ushort SourcePicoseconds { get; init; }

    /// <summary>When the server received or read the value (UTC), or <see cref="DateTime.MinValue"/>.</summary>
    public DateTime ServerTimestamp { get; init; }

    /// <summary>Picoseconds (0-9999) beyond <see cref="ServerTimestamp"/>.</summary>
    public ushort ServerPicoseconds { get; init; }

    /// <summary>Value, status and source time for reading.</summary>
    public override string ToString() => $"{Value} {Status} {SourceTimestamp:O}";
}

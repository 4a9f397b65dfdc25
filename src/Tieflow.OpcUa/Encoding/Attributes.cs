namespace Tieflow.OpcUa.Encoding;

/// <summary>Attribute ids of OPC 10000-6 Annex A (the ones Tieflow reads).</summary>
public static class Attributes
{
    /// <summary>NodeId attribute.</summary>
    public const uint NodeId = 1;

    /// <summary>NodeClass attribute.</summary>
    public const uint NodeClass = 2;

    /// <summary>BrowseName attribute.</summary>
    public const uint BrowseName = 3;

    /// <summary>DisplayName attribute.</summary>
    public const uint DisplayName = 4;

    /// <summary>Description attribute.</summary>
    public const uint Description = 5;

    /// <summary>Value attribute.</summary>
    public const uint Value = 13;

    /// <summary>DataType attribute.</summary>
    public const uint DataType = 14;

    /// <summary>ValueRank attribute.</summary>
    public const uint ValueRank = 15;

    /// <summary>ArrayDimensions attribute.</summary>
    public const uint ArrayDimensions = 16;

    /// <summary>AccessLevel attribute.</summary>
    public const uint AccessLevel = 17;

    /// <summary>UserAccessLevel attribute.</summary>
    public const uint UserAccessLevel = 18;

    /// <summary>MinimumSamplingInterval attribute.</summary>
    public const uint MinimumSamplingInterval = 19;

    /// <summary>Historizing attribute.</summary>
    public const uint Historizing = 20;
}

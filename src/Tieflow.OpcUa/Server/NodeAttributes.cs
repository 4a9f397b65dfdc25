using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>Reads one attribute of a node (OPC 10000-4 §5.10.2, attribute ids of OPC 10000-6 §5.3).</summary>
internal static class NodeAttributes
{
    public const uint NodeIdAttribute = 1;
    public const uint NodeClass = 2;
    public const uint BrowseName = 3;
    public const uint DisplayName = 4;
    public const uint Description = 5;
    public const uint WriteMask = 6;
    public const uint UserWriteMask = 7;
    public const uint IsAbstract = 8;
    public const uint EventNotifier = 12;
    public const uint Value = 13;
    public const uint DataType = 14;
    public const uint ValueRank = 15;
    public const uint ArrayDimensions = 16;
    public const uint AccessLevel = 17;
    public const uint UserAccessLevel = 18;
    public const uint MinimumSamplingInterval = 19;
    public const uint Historizing = 20;

    /// <summary>
    /// The attribute as a DataValue: the Value attribute keeps its status and source time, the others carry only the
    /// value; an attribute the node class lacks gives Bad_AttributeIdInvalid.
    /// </summary>
    public static DataValue Read(ServerNode node, uint attributeId)
    {
        var value = attributeId switch
        {
            NodeIdAttribute => new Variant(BuiltInType.NodeId, node.NodeId),
            NodeClass => new Variant(BuiltInType.Int32, (int)node.NodeClass),
            BrowseName => new Variant(BuiltInType.QualifiedName, node.BrowseName),
            DisplayName => new Variant(BuiltInType.LocalizedText, node.DisplayName),
            Description => new Variant(BuiltInType.LocalizedText, node.Description),
            WriteMask or UserWriteMask => new Variant(BuiltInType.UInt32, 0u),
            IsAbstract when node.NodeClass is ServerNodeClass.ObjectType or ServerNodeClass.VariableType
                or ServerNodeClass.ReferenceType or ServerNodeClass.DataType => new Variant(BuiltInType.Boolean, node.IsAbstract),
            EventNotifier when node.NodeClass is ServerNodeClass.Object or ServerNodeClass.View => new Variant(BuiltInType.Byte, node.EventNotifier),
            _ => (Variant?)null,
        };
        if (value is { } v)
        {
            return new DataValue { Value = v };
        }
        if (node is not ServerVariable variable)
        {
            return new DataValue { Status = StatusCodes.BadAttributeIdInvalid };
        }
        return attributeId switch
        {
            Value => variable.CurrentValue,
            DataType => new DataValue { Value = new Variant(BuiltInType.NodeId, variable.DataType) },
            ValueRank => new DataValue { Value = new Variant(BuiltInType.Int32, variable.ValueRank) },
            ArrayDimensions => new DataValue { Value = variable.ValueRank == 1 ? new Variant(BuiltInType.UInt32, new uint[] { 0 }) : Variant.Null },
            AccessLevel or UserAccessLevel => new DataValue { Value = new Variant(BuiltInType.Byte, variable.AccessLevel) },
            MinimumSamplingInterval => new DataValue { Value = new Variant(BuiltInType.Double, variable.MinimumSamplingIntervalMs) },
            Historizing => new DataValue { Value = new Variant(BuiltInType.Boolean, false) },
            _ => new DataValue { Status = StatusCodes.BadAttributeIdInvalid },
        };
    }

    /// <summary>Applies TimestampsToReturn (0 Source, 1 Server, 2 Both, 3 Neither) and stamps the server time.</summary>
    public static DataValue WithTimestamps(DataValue value, int timestampsToReturn, DateTime serverTime, bool isValueAttribute)
    {
        var source = isValueAttribute && timestampsToReturn is 0 or 2;
        var server = timestampsToReturn is 1 or 2;
        return new DataValue
        {
            Value = value.Value,
            Status = value.Status,
            SourceTimestamp = source ? value.SourceTimestamp : DateTime.MinValue,
            SourcePicoseconds = source ? value.SourcePicoseconds : (ushort)0,
            ServerTimestamp = server ? serverTime : DateTime.MinValue,
        };
    }
}

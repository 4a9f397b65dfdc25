using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// The part of namespace 0 that generic clients expect (docs/opcua.md §2.3): Root, Objects, Types, Views, the Server object
/// with NamespaceArray, ServerArray, ServerStatus and ServerCapabilities/OperationLimits, and the type nodes our
/// references point to.
/// </summary>
internal static class StandardNodes
{
    public static void Build(ServerEngine engine)
    {
        var space = engine.AddressSpace;
        var settings = engine.Settings;

        space.Add(Folder(WellKnownNodes.RootFolder, "Root"), NodeId.Null, 0);
        space.Add(Folder(WellKnownNodes.ObjectsFolder, "Objects"), Id(WellKnownNodes.RootFolder), WellKnownNodes.Organizes);
        space.Add(Folder(WellKnownNodes.TypesFolder, "Types"), Id(WellKnownNodes.RootFolder), WellKnownNodes.Organizes);
        space.Add(Folder(WellKnownNodes.ViewsFolder, "Views"), Id(WellKnownNodes.RootFolder), WellKnownNodes.Organizes);

        // Type nodes, so that TypeDefinition targets and HasTypeDefinition references resolve when browsed.
        foreach (var (id, name) in new[]
        {
            (WellKnownNodes.BaseObjectType, "BaseObjectType"), (WellKnownNodes.FolderType, "FolderType"),
            (WellKnownNodes.ServerType, "ServerType"), (WellKnownNodes.ServerCapabilitiesType, "ServerCapabilitiesType"),
            (WellKnownNodes.OperationLimitsType, "OperationLimitsType"),
        })
        {
            space.Add(new ServerNode(Id(id), ServerNodeClass.ObjectType, new QualifiedName(name), new LocalizedText(name)), NodeId.Null, 0);
        }
        foreach (var (id, name) in new[]
        {
            (WellKnownNodes.BaseDataVariableType, "BaseDataVariableType"), (WellKnownNodes.PropertyType, "PropertyType"),
            (WellKnownNodes.ServerStatusType, "ServerStatusType"), (WellKnownNodes.AnalogItemType, "AnalogItemType"),
        })
        {
            space.Add(new ServerNode(Id(id), ServerNodeClass.VariableType, new QualifiedName(name), new LocalizedText(name)), NodeId.Null, 0);
        }

        var server = space.Add(new ServerNode(Id(WellKnownNodes.Server), ServerNodeClass.Object, new QualifiedName("Server"), new LocalizedText("Server"))
        {
            TypeDefinition = Id(WellKnownNodes.ServerType),
        }, Id(WellKnownNodes.ObjectsFolder), WellKnownNodes.Organizes);

        Property(space, server.NodeId, WellKnownNodes.NamespaceArray, "NamespaceArray", WellKnownNodes.StringType,
            new Variant(BuiltInType.String, new[] { "http://opcfoundation.org/UA/", settings.ApplicationUri, settings.NamespaceUri }), 1);
        Property(space, server.NodeId, WellKnownNodes.ServerArray, "ServerArray", WellKnownNodes.StringType,
            new Variant(BuiltInType.String, new[] { settings.ApplicationUri }), 1);
        Property(space, server.NodeId, WellKnownNodes.ServiceLevel, "ServiceLevel", WellKnownNodes.ByteType, new Variant(BuiltInType.Byte, (byte)255));

        var status = space.Add(new ServerVariable(Id(WellKnownNodes.ServerStatus), new QualifiedName("ServerStatus"), new LocalizedText("ServerStatus"),
            Id(WellKnownNodes.ServerStatusDataType), new DataValue())
        {
            TypeDefinition = Id(WellKnownNodes.ServerStatusType),
            ValueSource = () => Good(engine, new Variant(BuiltInType.ExtensionObject, new ExtensionObject(
                new NodeId(ServerStatusDataType.EncodingId), ExtensionObjectEncoding.Binary, StatusStructure(engine)))),
        }, server.NodeId, WellKnownNodes.HasComponent);
        Component(space, status.NodeId, WellKnownNodes.ServerStatusStartTime, "StartTime", WellKnownNodes.UtcTimeType,
            () => Good(engine, new Variant(BuiltInType.DateTime, engine.StartTime)));
        Component(space, status.NodeId, WellKnownNodes.ServerStatusCurrentTime, "CurrentTime", WellKnownNodes.UtcTimeType,
            () => Good(engine, new Variant(BuiltInType.DateTime, engine.Now)));
        Component(space, status.NodeId, WellKnownNodes.ServerStatusState, "State", WellKnownNodes.ServerStateType,
            () => Good(engine, new Variant(BuiltInType.Int32, (int)engine.StateUnlocked)));

        var capabilities = space.Add(new ServerNode(Id(WellKnownNodes.ServerCapabilities), ServerNodeClass.Object,
            new QualifiedName("ServerCapabilities"), new LocalizedText("ServerCapabilities"))
        {
            TypeDefinition = Id(WellKnownNodes.ServerCapabilitiesType),
        }, server.NodeId, WellKnownNodes.HasComponent);
        Property(space, capabilities.NodeId, WellKnownNodes.MinSupportedSampleRate, "MinSupportedSampleRate", WellKnownNodes.DurationType,
            new Variant(BuiltInType.Double, settings.MinSamplingIntervalMs));
        Property(space, capabilities.NodeId, WellKnownNodes.MaxArrayLength, "MaxArrayLength", WellKnownNodes.UInt32Type,
            new Variant(BuiltInType.UInt32, (uint)EncodingLimits.Default.MaxArrayLength));
        Property(space, capabilities.NodeId, WellKnownNodes.MaxStringLength, "MaxStringLength", WellKnownNodes.UInt32Type,
            new Variant(BuiltInType.UInt32, (uint)EncodingLimits.Default.MaxStringLength));
        Property(space, capabilities.NodeId, WellKnownNodes.MaxByteStringLength, "MaxByteStringLength", WellKnownNodes.UInt32Type,
            new Variant(BuiltInType.UInt32, (uint)EncodingLimits.Default.MaxByteStringLength));
        var limits = space.Add(new ServerNode(Id(WellKnownNodes.OperationLimits), ServerNodeClass.Object,
            new QualifiedName("OperationLimits"), new LocalizedText("OperationLimits"))
        {
            TypeDefinition = Id(WellKnownNodes.OperationLimitsType),
        }, capabilities.NodeId, WellKnownNodes.HasComponent);
        foreach (var (id, name) in new[]
        {
            (WellKnownNodes.MaxNodesPerRead, "MaxNodesPerRead"), (WellKnownNodes.MaxNodesPerBrowse, "MaxNodesPerBrowse"),
            (WellKnownNodes.MaxMonitoredItemsPerCall, "MaxMonitoredItemsPerCall"),
        })
        {
            Property(space, limits.NodeId, id, name, WellKnownNodes.UInt32Type, new Variant(BuiltInType.UInt32, 1000u));
        }
    }

    /// <summary>The EURange property of an AnalogItem (a Range structure, encoding i=886).</summary>
    public static ServerVariable EngineeringUnitsRange(AddressSpace space, NodeId item, double low, double high)
    {
        var nodeId = item.IdType == NodeIdType.String
            ? new NodeId(item.StringIdentifier + ".EURange", item.NamespaceIndex)
            : new NodeId(Guid.NewGuid(), item.NamespaceIndex);
        var value = new Variant(BuiltInType.ExtensionObject, new ExtensionObject(new NodeId(Encoding.Range.EncodingId), ExtensionObjectEncoding.Binary,
            new Encoding.Range { Low = low, High = high }));
        return space.Add(new ServerVariable(nodeId, new QualifiedName("EURange"), new LocalizedText("EURange"), Id(WellKnownNodes.RangeType),
            new DataValue { Value = value })
        {
            TypeDefinition = Id(WellKnownNodes.PropertyType),
        }, item, WellKnownNodes.HasProperty);
    }

    private static ServerStatusDataType StatusStructure(ServerEngine engine) => new()
    {
        StartTime = engine.StartTime,
        CurrentTime = engine.Now,
        State = engine.StateUnlocked,
        BuildInfo = new BuildInfo
        {
            ProductUri = engine.Settings.ProductUri,
            ManufacturerName = "Tieflow",
            ProductName = engine.Settings.ApplicationName,
            SoftwareVersion = typeof(StandardNodes).Assembly.GetName().Version?.ToString() ?? "0.0",
            BuildNumber = "0",
            BuildDate = engine.StartTime,
        },
        SecondsTillShutdown = 0,
        ShutdownReason = default,
    };

    private static DataValue Good(ServerEngine engine, Variant value) => new()
    {
        Value = value,
        Status = StatusCodes.Good,
        SourceTimestamp = engine.Now,
    };

    private static NodeId Id(uint id) => new(id);

    private static ServerNode Folder(uint id, string name) =>
        new(Id(id), ServerNodeClass.Object, new QualifiedName(name), new LocalizedText(name)) { TypeDefinition = Id(WellKnownNodes.FolderType) };

    private static void Property(AddressSpace space, NodeId parent, uint id, string name, uint dataType, Variant value, int valueRank = -1) =>
        space.Add(new ServerVariable(Id(id), new QualifiedName(name), new LocalizedText(name), Id(dataType), new DataValue { Value = value })
        {
            TypeDefinition = Id(WellKnownNodes.PropertyType),
            ValueRank = valueRank,
        }, parent, WellKnownNodes.HasProperty);

    private static void Component(AddressSpace space, NodeId parent, uint id, string name, uint dataType, Func<DataValue> source) =>
        space.Add(new ServerVariable(Id(id), new QualifiedName(name), new LocalizedText(name), Id(dataType), new DataValue())
        {
            TypeDefinition = Id(WellKnownNodes.BaseDataVariableType),
            ValueSource = source,
        }, parent, WellKnownNodes.HasComponent);
}

namespace Tieflow.OpcUa.Server;

/// <summary>Numeric identifiers of namespace 0 that the server uses (OPC 10000-6 Annex A, NodeIds.csv).</summary>
internal static class WellKnownNodes
{
    // Folders and objects.
    public const uint RootFolder = 84;
    public const uint ObjectsFolder = 85;
    public const uint TypesFolder = 86;
    public const uint ViewsFolder = 87;
    public const uint Server = 2253;
    public const uint ServerArray = 2254;
    public const uint NamespaceArray = 2255;
    public const uint ServerStatus = 2256;
    public const uint ServerStatusStartTime = 2257;
    public const uint ServerStatusCurrentTime = 2258;
    public const uint ServerStatusState = 2259;
    public const uint ServiceLevel = 2267;
    public const uint ServerCapabilities = 2268;
    public const uint MinSupportedSampleRate = 2272;
    public const uint MaxArrayLength = 11702;
    public const uint MaxStringLength = 11703;
    public const uint OperationLimits = 11704;
    public const uint MaxNodesPerRead = 11705;
    public const uint MaxNodesPerBrowse = 11710;
    public const uint MaxMonitoredItemsPerCall = 11714;
    public const uint MaxByteStringLength = 12911;

    // Reference types.
    public const uint References = 31;
    public const uint NonHierarchicalReferences = 32;
    public const uint HierarchicalReferences = 33;
    public const uint HasChild = 34;
    public const uint Organizes = 35;
    public const uint HasEventSource = 36;
    public const uint HasTypeDefinition = 40;
    public const uint Aggregates = 44;
    public const uint HasSubtype = 45;
    public const uint HasProperty = 46;
    public const uint HasComponent = 47;
    public const uint HasNotifier = 48;

    // Types.
    public const uint BaseObjectType = 58;
    public const uint FolderType = 61;
    public const uint BaseDataVariableType = 63;
    public const uint PropertyType = 68;
    public const uint ServerType = 2004;
    public const uint ServerStatusType = 2138;
    public const uint ServerCapabilitiesType = 2013;
    public const uint OperationLimitsType = 11564;
    public const uint AnalogItemType = 2368;

    // Data types.
    public const uint BooleanType = 1;
    public const uint ByteType = 3;
    public const uint Int32Type = 6;
    public const uint UInt32Type = 7;
    public const uint DoubleType = 11;
    public const uint StringType = 12;
    public const uint DateTimeType = 13;
    public const uint DurationType = 290;
    public const uint UtcTimeType = 294;
    public const uint ServerStateType = 852;
    public const uint ServerStatusDataType = 862;
    public const uint RangeType = 884;

    // Binary encodings of structures carried in Variants.
    public const uint ServerStatusDataTypeEncoding = 864;
    public const uint RangeEncoding = 886;
}

namespace Tieflow.OpcUa.Encoding;

/// <summary>NodeIds of namespace 0 that Tieflow uses (docs/opcua.md §1.5).</summary>
public static class WellKnownNodes
{
    /// <summary>Root folder (i=84).</summary>
    public static NodeId RootFolder => new(84);

    /// <summary>Objects folder (i=85).</summary>
    public static NodeId ObjectsFolder => new(85);

    /// <summary>Types folder (i=86).</summary>
    public static NodeId TypesFolder => new(86);

    /// <summary>Views folder (i=87).</summary>
    public static NodeId ViewsFolder => new(87);

    /// <summary>Server object (i=2253).</summary>
    public static NodeId Server => new(2253);

    /// <summary>Server.ServerArray (i=2254).</summary>
    public static NodeId ServerArray => new(2254);

    /// <summary>Server.NamespaceArray (i=2255).</summary>
    public static NodeId NamespaceArray => new(2255);

    /// <summary>Server.ServerStatus (i=2256).</summary>
    public static NodeId ServerStatus => new(2256);

    /// <summary>Server.ServerStatus.State (i=2259).</summary>
    public static NodeId ServerStatusState => new(2259);

    /// <summary>References (i=31).</summary>
    public static NodeId References => new(31);

    /// <summary>HierarchicalReferences (i=33).</summary>
    public static NodeId HierarchicalReferences => new(33);

    /// <summary>Organizes (i=35).</summary>
    public static NodeId Organizes => new(35);

    /// <summary>HasTypeDefinition (i=40).</summary>
    public static NodeId HasTypeDefinition => new(40);

    /// <summary>HasProperty (i=46).</summary>
    public static NodeId HasProperty => new(46);

    /// <summary>HasComponent (i=47).</summary>
    public static NodeId HasComponent => new(47);
}

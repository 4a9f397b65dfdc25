using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>A node of the server's address space with its common attributes and its references.</summary>
internal class ServerNode
{
    public ServerNode(NodeId nodeId, ServerNodeClass nodeClass, QualifiedName browseName, LocalizedText displayName)
    {
        NodeId = nodeId;
        NodeClass = nodeClass;
        BrowseName = browseName;
        DisplayName = displayName;
    }

    public NodeId NodeId { get; }

    public ServerNodeClass NodeClass { get; }

    public QualifiedName BrowseName { get; }

    public LocalizedText DisplayName { get; }

    public LocalizedText Description { get; init; }

    /// <summary>For objects and variables, the HasTypeDefinition target; null for the other classes.</summary>
    public NodeId TypeDefinition { get; init; }

    /// <summary>Type nodes only: the IsAbstract attribute.</summary>
    public bool IsAbstract { get; init; }

    /// <summary>Objects only: the EventNotifier attribute (0: no events).</summary>
    public byte EventNotifier { get; init; }

    /// <summary>The references in insertion order (the address space keeps both directions).</summary>
    public List<ServerReference> References { get; } = [];
}

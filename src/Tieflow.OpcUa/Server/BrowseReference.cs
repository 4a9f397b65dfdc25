using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>One reference found by Browse, with the attributes of its target that a ReferenceDescription carries.</summary>
internal sealed record BrowseReference(
    NodeId ReferenceTypeId,
    bool IsForward,
    NodeId Target,
    QualifiedName BrowseName,
    LocalizedText DisplayName,
    ServerNodeClass NodeClass,
    NodeId TypeDefinition);

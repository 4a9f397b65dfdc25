using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>One reference found by browsing.</summary>
/// <param name="ReferenceTypeId">The reference type (for example Organizes i=35).</param>
/// <param name="IsForward">True for a forward reference.</param>
/// <param name="NodeId">The target node.</param>
/// <param name="BrowseName">The target's browse name.</param>
/// <param name="DisplayName">The target's display name.</param>
/// <param name="NodeClass">The target's node class.</param>
/// <param name="TypeDefinition">The target's type definition (objects and variables), otherwise null.</param>
public sealed record UaReference(NodeId ReferenceTypeId, bool IsForward, ExpandedNodeId NodeId, QualifiedName BrowseName, LocalizedText DisplayName,
    NodeClass NodeClass, ExpandedNodeId TypeDefinition);

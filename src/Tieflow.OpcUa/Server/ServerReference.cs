using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>One reference held by a node: its type, its direction and the node at the other end.</summary>
internal readonly record struct ServerReference(NodeId ReferenceTypeId, bool IsForward, NodeId Target);

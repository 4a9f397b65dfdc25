using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// The nodes of the server and the queries the services need (browse, translate, read). Not thread-safe: the server
/// calls it under its lock.
/// </summary>
internal sealed class AddressSpace
{
    private readonly Dictionary<NodeId, ServerNode> _nodes = [];

    // Reference type hierarchy (subtype -> supertype) of the reference types the server uses (OPC 10000-5 §11).
    private static readonly Dictionary<uint, uint> ReferenceSupertypes = new()
    {
        [WellKnownNodes.NonHierarchicalReferences] = WellKnownNodes.References,
        [WellKnownNodes.HierarchicalReferences] = WellKnownNodes.References,
        [WellKnownNodes.HasChild] = WellKnownNodes.HierarchicalReferences,
        [WellKnownNodes.Organizes] = WellKnownNodes.HierarchicalReferences,
        [WellKnownNodes.HasEventSource] = WellKnownNodes.HierarchicalReferences,
        [WellKnownNodes.HasNotifier] = WellKnownNodes.HasEventSource,
        [WellKnownNodes.Aggregates] = WellKnownNodes.HasChild,
        [WellKnownNodes.HasSubtype] = WellKnownNodes.HasChild,
        [WellKnownNodes.HasComponent] = WellKnownNodes.Aggregates,
        [WellKnownNodes.HasProperty] = WellKnownNodes.Aggregates,
        [WellKnownNodes.HasTypeDefinition] = WellKnownNodes.NonHierarchicalReferences,
    };

    public int Count => _nodes.Count;

    public bool TryGet(NodeId nodeId, out ServerNode node) => _nodes.TryGetValue(nodeId, out node!);

    public ServerNode Get(NodeId nodeId) =>
        _nodes.TryGetValue(nodeId, out var node) ? node : throw new ArgumentException($"node {nodeId} does not exist", nameof(nodeId));

    /// <summary>Adds a node under a parent with a forward reference of the given type (and the inverse one).</summary>
    public T Add<T>(T node, NodeId parent, uint referenceType)
        where T : ServerNode
    {
        if (_nodes.ContainsKey(node.NodeId))
        {
            throw new ArgumentException($"node {node.NodeId} already exists", nameof(node));
        }
        if (!parent.IsNull && !_nodes.ContainsKey(parent))
        {
            throw new ArgumentException($"parent node {parent} does not exist", nameof(parent));
        }
        _nodes.Add(node.NodeId, node);
        if (!parent.IsNull)
        {
            AddReference(parent, new NodeId(referenceType), node.NodeId);
        }
        if (!node.TypeDefinition.IsNull)
        {
            node.References.Add(new ServerReference(new NodeId(WellKnownNodes.HasTypeDefinition), true, node.TypeDefinition));
        }
        return node;
    }

    public void AddReference(NodeId source, NodeId referenceType, NodeId target)
    {
        Get(source).References.Add(new ServerReference(referenceType, true, target));
        if (_nodes.TryGetValue(target, out var targetNode))
        {
            targetNode.References.Add(new ServerReference(referenceType, false, source));
        }
    }

    /// <summary>True when <paramref name="candidate"/> is <paramref name="wanted"/> or, with subtypes, derives from it.</summary>
    public static bool IsReferenceOfType(NodeId candidate, NodeId wanted, bool includeSubtypes)
    {
        if (wanted.IsNull || candidate == wanted)
        {
            return true;
        }
        if (!includeSubtypes || candidate.NamespaceIndex != 0 || candidate.IdType != NodeIdType.Numeric ||
            wanted.NamespaceIndex != 0 || wanted.IdType != NodeIdType.Numeric)
        {
            return false;
        }
        var id = candidate.NumericIdentifier;
        while (ReferenceSupertypes.TryGetValue(id, out var super))
        {
            if (super == wanted.NumericIdentifier)
            {
                return true;
            }
            id = super;
        }
        return false;
    }

    /// <summary>True when the reference type is one the server knows (null means "all references").</summary>
    public bool IsKnownReferenceType(NodeId referenceType) =>
        referenceType.IsNull || (referenceType.NamespaceIndex == 0 && referenceType.IdType == NodeIdType.Numeric &&
            (referenceType.NumericIdentifier == WellKnownNodes.References || ReferenceSupertypes.ContainsKey(referenceType.NumericIdentifier)));

    /// <summary>
    /// The references of one node that match a browse description (direction 0 forward, 1 inverse, 2 both; a
    /// node class mask of 0 takes every class).
    /// </summary>
    public List<BrowseReference> Browse(ServerNode node, int direction, NodeId referenceType, bool includeSubtypes, uint nodeClassMask)
    {
        var result = new List<BrowseReference>();
        foreach (var reference in node.References)
        {
            if ((direction == 0 && !reference.IsForward) || (direction == 1 && reference.IsForward))
            {
                continue;
            }
            if (!IsReferenceOfType(reference.ReferenceTypeId, referenceType, includeSubtypes))
            {
                continue;
            }
            if (!_nodes.TryGetValue(reference.Target, out var target))
            {
                continue;
            }
            if (nodeClassMask != 0 && (nodeClassMask & (uint)target.NodeClass) == 0)
            {
                continue;
            }
            result.Add(new BrowseReference(reference.ReferenceTypeId, reference.IsForward, target.NodeId, target.BrowseName,
                target.DisplayName, target.NodeClass, target.TypeDefinition));
        }
        return result;
    }

    /// <summary>Follows one element of a relative path: the targets of matching references with that browse name.</summary>
    public IEnumerable<NodeId> Follow(NodeId source, NodeId referenceType, bool isInverse, bool includeSubtypes, QualifiedName targetName)
    {
        if (!_nodes.TryGetValue(source, out var node))
        {
            yield break;
        }
        foreach (var reference in node.References)
        {
            if (reference.IsForward == isInverse || !IsReferenceOfType(reference.ReferenceTypeId, referenceType, includeSubtypes))
            {
                continue;
            }
            if (_nodes.TryGetValue(reference.Target, out var target) && target.BrowseName == targetName)
            {
                yield return target.NodeId;
            }
        }
    }
}

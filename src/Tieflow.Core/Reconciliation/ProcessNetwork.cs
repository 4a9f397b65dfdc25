namespace Tieflow.Core.Reconciliation;

/// <summary>
/// A process network for reconciliation: nodes (stages, mixers, splitters), streams between them or across the
/// boundary, and optionally the components whose fractions are balanced. Without components the network is
/// flow-only and its balances are linear.
/// </summary>
public sealed class ProcessNetwork
{
    private readonly Dictionary<string, int> _nodeIndex;
    private readonly Dictionary<string, int> _streamIndex;
    private readonly Dictionary<string, int> _componentIndex;

    /// <summary>Creates and checks a network.</summary>
    /// <param name="nodes">Node identifiers, unique, at least one.</param>
    /// <param name="streams">Streams, unique identifiers, each naming known nodes, at least one; every node needs a stream.</param>
    /// <param name="components">Component identifiers for component balances; empty or <see langword="null"/> for flow-only.</param>
    /// <exception cref="ArgumentException">The network is empty, an identifier repeats, a stream names an unknown node or
    /// connects a node to itself or to nothing, or a node has no stream. The message names the item.</exception>
    public ProcessNetwork(IEnumerable<string> nodes, IEnumerable<NetworkStream> streams, IEnumerable<string>? components = null)
    {
        ArgumentNullException.ThrowIfNull(nodes);
        ArgumentNullException.ThrowIfNull(streams);
        Nodes = [.. nodes];
        Streams = [.. streams];
        Components = components is null ? [] : [.. components];
        if (Nodes.Count == 0)
        {
            throw new ArgumentException("Expected at least one node.", nameof(nodes));
        }

        if (Streams.Count == 0)
        {
            throw new ArgumentException("Expected at least one stream.", nameof(streams));
        }

        _nodeIndex = Index(Nodes, "node", nameof(nodes));
        _streamIndex = Index([.. Streams.Select(s => s.Id)], "stream", nameof(streams));
        _componentIndex = Index(Components, "component", nameof(components));
        var used = new bool[Nodes.Count];
        foreach (NetworkStream s in Streams)
        {
            if (s.From is null && s.To is null)
            {
                throw new ArgumentException($"Stream '{s.Id}' has neither a 'from' nor a 'to' node.", nameof(streams));
            }

            if (s.From is not null && s.From == s.To)
            {
                throw new ArgumentException($"Stream '{s.Id}' leaves and enters the same node '{s.From}'.", nameof(streams));
            }

            foreach (string? end in (ReadOnlySpan<string?>)[s.From, s.To])
            {
                if (end is null)
                {
                    continue;
                }

                if (!_nodeIndex.TryGetValue(end, out int n))
                {
                    throw new ArgumentException($"Stream '{s.Id}' names the unknown node '{end}'.", nameof(streams));
                }

                used[n] = true;
            }
        }

        int unused = Array.IndexOf(used, false);
        if (unused >= 0)
        {
            throw new ArgumentException($"Node '{Nodes[unused]}' has no stream.", nameof(nodes));
        }
    }

    /// <summary>Node identifiers in the order given.</summary>
    public IReadOnlyList<string> Nodes { get; }

    /// <summary>Streams in the order given.</summary>
    public IReadOnlyList<NetworkStream> Streams { get; }

    /// <summary>Component identifiers in the order given; empty for a flow-only network.</summary>
    public IReadOnlyList<string> Components { get; }

    /// <summary>Whether the network balances total flows only (no components).</summary>
    public bool IsFlowOnly => Components.Count == 0;

    /// <summary>Number of quantities: one flow per stream, plus one fraction per component and stream.</summary>
    public int QuantityCount => Streams.Count * (Components.Count + 1);

    /// <summary>Index of a stream, or -1 when the network has no such stream.</summary>
    public int IndexOfStream(string id) => _streamIndex.TryGetValue(id, out int i) ? i : -1;

    /// <summary>Index of a node, or -1 when the network has no such node.</summary>
    public int IndexOfNode(string id) => _nodeIndex.TryGetValue(id, out int i) ? i : -1;

    /// <summary>Index of a component, or -1 when the network has no such component.</summary>
    public int IndexOfComponent(string id) => _componentIndex.TryGetValue(id, out int i) ? i : -1;

    /// <summary>
    /// Position of a quantity in network order (stream by stream: flow, then the fractions in component order),
    /// or -1 when the stream or component is unknown, or a fraction is asked of a flow-only network.
    /// </summary>
    public int IndexOf(QuantityKey key)
    {
        int s = IndexOfStream(key.Stream);
        if (s < 0)
        {
            return -1;
        }

        int stride = Components.Count + 1;
        if (key.Quantity == MeasuredQuantity.Flow)
        {
            return s * stride;
        }

        int c = key.Component is null ? -1 : IndexOfComponent(key.Component);
        return c < 0 ? -1 : (s * stride) + 1 + c;
    }

    /// <summary>The quantity at a position in network order.</summary>
    /// <exception cref="ArgumentOutOfRangeException">The index is outside [0, <see cref="QuantityCount"/>).</exception>
    public QuantityKey KeyAt(int index)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(index);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(index, QuantityCount);
        int stride = Components.Count + 1;
        string stream = Streams[index / stride].Id;
        int c = (index % stride) - 1;
        return c < 0 ? QuantityKey.FlowOf(stream) : QuantityKey.FractionOf(stream, Components[c]);
    }

    private static Dictionary<string, int> Index(IReadOnlyList<string> ids, string what, string parameter)
    {
        var index = new Dictionary<string, int>(ids.Count, StringComparer.Ordinal);
        for (int i = 0; i < ids.Count; i++)
        {
            if (string.IsNullOrWhiteSpace(ids[i]))
            {
                throw new ArgumentException($"A {what} identifier is empty (item {i}).", parameter);
            }

            if (!index.TryAdd(ids[i], i))
            {
                throw new ArgumentException($"The {what} identifier '{ids[i]}' appears more than once.", parameter);
            }
        }

        return index;
    }
}

using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <content>Browse, translate, read, and the namespace table.</content>
public sealed partial class UaClient
{
    private async Task<string[]> ReadNamespaceArrayAsync(CancellationToken cancellationToken)
    {
        var values = await ReadAsync([WellKnownNodes.NamespaceArray], Attributes.Value, cancellationToken).ConfigureAwait(false);
        return values[0].Value.Value as string[] ?? [];
    }

    private ClientSecureChannel ConnectedChannel(string service) =>
        _state == UaConnectionState.Connected || _state == UaConnectionState.Connecting || _reconnecting == 1
            ? _channel ?? throw NotConnected(service)
            : throw NotConnected(service);

    private ServiceResultException NotConnected(string service) =>
        new(StatusCodes.BadServerNotConnected, $"{service}: not connected to {_options.EndpointUrl} (state {_state})");

    private Task<TResponse> CallAsync<TResponse>(IServiceRequest request, string service, CancellationToken cancellationToken, TimeSpan? timeout = null)
        where TResponse : class, IServiceResponse
    {
        var channel = ConnectedChannel(service);
        var t = timeout ?? _options.RequestTimeout;
        request.RequestHeader = channel.NewHeader(_authenticationToken, t);
        return channel.SendAsync<TResponse>(request, t, cancellationToken);
    }

    /// <summary>Resolves a node given by namespace URI (<c>nsu=</c>) to the server's current namespace index.</summary>
    /// <param name="node">The node.</param>
    /// <returns>The NodeId with the current index.</returns>
    /// <exception cref="ServiceResultException">BadNodeIdUnknown: the namespace URI is not in the server's NamespaceArray.</exception>
    public NodeId Resolve(ExpandedNodeId node)
    {
        if (node.NamespaceUri is null)
        {
            return node.NodeId;
        }

        var index = Array.IndexOf(_namespaceUris, node.NamespaceUri);
        if (index < 0)
        {
            throw new ServiceResultException(StatusCodes.BadNodeIdUnknown, $"Node {node}: namespace '{node.NamespaceUri}' is not in the server's NamespaceArray");
        }

        return WithNamespace(node.NodeId, (ushort)index);
    }

    private static NodeId WithNamespace(NodeId id, ushort ns) => id.IdType switch
    {
        NodeIdType.Numeric => new NodeId(id.NumericIdentifier, ns),
        NodeIdType.String => new NodeId(id.StringIdentifier!, ns),
        NodeIdType.Guid => new NodeId(id.GuidIdentifier!.Value, ns),
        _ => new NodeId(id.OpaqueIdentifier.ToArray(), ns),
    };

    /// <summary>Reads one attribute of each node (the Value by default), 1000 nodes per request.</summary>
    /// <param name="nodes">The nodes.</param>
    /// <param name="attributeId">The attribute (see <see cref="Attributes"/>).</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>One DataValue per node, in order; a per-node failure is in its status (for example BadNodeIdUnknown).</returns>
    /// <exception cref="ServiceResultException">The call failed as a whole.</exception>
    public async Task<IReadOnlyList<DataValue>> ReadAsync(IReadOnlyList<NodeId> nodes, uint attributeId = Attributes.Value, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(nodes);
        var results = new List<DataValue>(nodes.Count);
        for (var start = 0; start < nodes.Count; start += 1000)
        {
            var batch = nodes.Skip(start).Take(1000).Select(n => new ReadValueId { NodeId = n, AttributeId = attributeId }).ToArray();
            var response = await CallAsync<ReadResponse>(new ReadRequest { MaxAge = 0, TimestampsToReturn = TimestampsToReturn.Both, NodesToRead = batch }, "Read", cancellationToken).ConfigureAwait(false);
            if (response.Results.Length != batch.Length)
            {
                throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"Read of {batch.Length} nodes returned {response.Results.Length} results");
            }

            results.AddRange(response.Results);
        }

        return results;
    }

    /// <summary>Browses the references of a node, following continuation points (BrowseNext) until all are fetched.</summary>
    /// <param name="node">The node to browse.</param>
    /// <param name="direction">Which references (default forward).</param>
    /// <param name="referenceTypeId">Reference type to follow (default HierarchicalReferences i=33, subtypes included).</param>
    /// <param name="maxReferencesPerCall">Most references per response (0 = the server decides).</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>The references.</returns>
    /// <exception cref="ServiceResultException">The browse failed (for example BadNodeIdUnknown), naming the node.</exception>
    public async Task<IReadOnlyList<UaReference>> BrowseAsync(NodeId node, BrowseDirection direction = BrowseDirection.Forward, NodeId? referenceTypeId = null,
        uint maxReferencesPerCall = 0, CancellationToken cancellationToken = default)
    {
        var response = await CallAsync<BrowseResponse>(new BrowseRequest
        {
            RequestedMaxReferencesPerNode = maxReferencesPerCall,
            NodesToBrowse =
            [
                new BrowseDescription
                {
                    NodeId = node, BrowseDirection = direction, ReferenceTypeId = referenceTypeId ?? WellKnownNodes.HierarchicalReferences,
                    IncludeSubtypes = true, NodeClassMask = 0, ResultMask = 63,
                },
            ],
        }, "Browse", cancellationToken).ConfigureAwait(false);
        var references = new List<UaReference>();
        var result = response.Results.FirstOrDefault() ?? throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"Browse of {node} returned no result");
        while (true)
        {
            if (result.StatusCode.IsBad)
            {
                throw new ServiceResultException(result.StatusCode, $"Browse of {node} failed");
            }

            references.AddRange(result.References.Select(r => new UaReference(r.ReferenceTypeId, r.IsForward, r.NodeId, r.BrowseName, r.DisplayName, r.NodeClass, r.TypeDefinition)));
            if (result.ContinuationPoint is not { Length: > 0 } continuation)
            {
                return references;
            }

            var next = await CallAsync<BrowseNextResponse>(new BrowseNextRequest { ReleaseContinuationPoints = false, ContinuationPoints = [continuation] }, "BrowseNext", cancellationToken)
                .ConfigureAwait(false);
            result = next.Results.FirstOrDefault() ?? throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"BrowseNext of {node} returned no result");
        }
    }

    /// <summary>
    /// Translates browse paths such as <c>/Objects/2:Plant/2:Unit1/2:Flow</c> (from the Root folder, each element a
    /// qualified browse name followed over hierarchical references) to NodeIds.
    /// </summary>
    /// <param name="paths">The paths.</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>One result per path with its status (BadNoMatch when nothing matches).</returns>
    /// <exception cref="FormatException">A path does not start with '/' or has an empty element.</exception>
    /// <exception cref="ServiceResultException">The call failed as a whole.</exception>
    public async Task<IReadOnlyList<UaBrowsePathResult>> TranslateAsync(IReadOnlyList<string> paths, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(paths);
        var browsePaths = paths.Select(ParseBrowsePath).ToArray();
        var response = await CallAsync<TranslateBrowsePathsToNodeIdsResponse>(new TranslateBrowsePathsToNodeIdsRequest { BrowsePaths = browsePaths }, "TranslateBrowsePathsToNodeIds", cancellationToken)
            .ConfigureAwait(false);
        if (response.Results.Length != paths.Count)
        {
            throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"TranslateBrowsePathsToNodeIds of {paths.Count} paths returned {response.Results.Length} results");
        }

        return response.Results.Select((r, i) => new UaBrowsePathResult(paths[i], r.StatusCode,
            r.Targets.Where(t => t.RemainingPathIndex == uint.MaxValue).Select(t => t.TargetId).ToArray())).ToArray();
    }

    private static BrowsePath ParseBrowsePath(string path)
    {
        if (string.IsNullOrEmpty(path) || path[0] != '/')
        {
            throw new FormatException($"Browse path '{path}' must start with '/' (for example /Objects/2:Plant/2:Unit1/2:Flow)");
        }

        var elements = path[1..].Split('/');
        if (elements.Any(string.IsNullOrEmpty))
        {
            throw new FormatException($"Browse path '{path}' has an empty element");
        }

        return new BrowsePath
        {
            StartingNode = WellKnownNodes.RootFolder,
            RelativePath = new RelativePath
            {
                Elements = elements.Select(e => new RelativePathElement
                {
                    ReferenceTypeId = WellKnownNodes.HierarchicalReferences, IsInverse = false, IncludeSubtypes = true, TargetName = QualifiedName.Parse(e),
                }).ToArray(),
            },
        };
    }
}

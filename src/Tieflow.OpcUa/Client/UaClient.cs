using System.Collections.Concurrent;
using System.Security.Cryptography;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <summary>
/// A read-only OPC UA client (SecurityPolicy None, UA Binary over opc.tcp): browse, translate browse paths, read,
/// and subscriptions whose notifications arrive on channels. The connection heals itself: every request has a
/// timeout, a keep-alive watchdog notices a silent server, and a lost connection is re-established with backoff
/// in the specification's order (reactivate the session, else a new session with TransferSubscriptions, else
/// recreate the subscriptions), with namespace indexes re-resolved by URI and gaps reported on each subscription.
/// Writing and calling methods are not possible: the client has no such requests.
/// </summary>
public sealed class UaClient : IAsyncDisposable
{
    private const string TransportProfileUri = "http://opcfoundation.org/UA-Profile/Transport/uatcp-uasc-uabinary";
    private readonly UaClientOptions _options;
    private readonly TimeProvider _time;
    private readonly ConcurrentQueue<SubscriptionAcknowledgement> _acks = new();
    private readonly List<UaSubscription> _subscriptions = [];
    private readonly SemaphoreSlim _subscriptionAdded = new(0);
    private readonly CancellationTokenSource _closing = new();
    private ClientSecureChannel? _channel;
    private NodeId _authenticationToken;
    private string[] _namespaceUris = [];
    private UserTokenPolicy? _tokenPolicy;
    private CancellationTokenSource? _publishing;
    private ITimer? _watchdog;
    private Task? _reconnect;
    private int _reconnecting;
    private int _activePublishers;
    private int _publishTarget;
    private uint _nextClientHandle;
    private long _lastSessionKeepAlive;
    private volatile UaConnectionState _state;

    /// <summary>Creates a client; nothing is sent until <see cref="ConnectAsync"/>.</summary>
    /// <param name="options">The settings; validated here.</param>
    /// <param name="timeProvider">The clock for timeouts, renewals, the watchdog and backoff (default the system clock).</param>
    /// <exception cref="ArgumentException">An option is out of range (the message names it).</exception>
    public UaClient(UaClientOptions options, TimeProvider? timeProvider = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        _options = options;
        _time = timeProvider ?? TimeProvider.System;
        _publishTarget = options.PublishRequestCount;
    }

    /// <summary>Raised on every change of <see cref="State"/> (on a thread-pool thread; keep handlers short).</summary>
    public event EventHandler<UaConnectionStateChange>? StateChanged;

    /// <summary>The connection state.</summary>
    public UaConnectionState State => _state;

    /// <summary>The server's NamespaceArray as read after the last (re)connection.</summary>
    public IReadOnlyList<string> NamespaceUris => _namespaceUris;

    /// <summary>How many times the connection has been re-established.</summary>
    public int ReconnectCount { get; private set; }

    /// <summary>Connects: UA TCP, secure channel, GetEndpoints, CreateSession and ActivateSession, then reads the NamespaceArray.</summary>
    /// <param name="cancellationToken">Cancels the attempt.</param>
    /// <returns>A task that completes when the session is active.</returns>
    /// <exception cref="ServiceResultException">The server cannot be reached or refused the session (the message says which step and why).</exception>
    public async Task ConnectAsync(CancellationToken cancellationToken = default)
    {
        ObjectDisposedException.ThrowIf(_closing.IsCancellationRequested, this);
        SetState(UaConnectionState.Connecting, StatusCodes.Good, $"Connecting to {_options.EndpointUrl}");
        try
        {
            await EstablishAsync(false, cancellationToken).ConfigureAwait(false);
        }
        catch
        {
            SetState(UaConnectionState.Disconnected, StatusCodes.BadNotConnected, $"Connecting to {_options.EndpointUrl} failed");
            throw;
        }

        _lastSessionKeepAlive = _time.GetTimestamp();
        _watchdog = _time.CreateTimer(_ => CheckWatchdog(), null, TimeSpan.FromMilliseconds(500), TimeSpan.FromMilliseconds(500));
        StartPublishing();
        SetState(UaConnectionState.Connected, StatusCodes.Good, $"Connected to {_options.EndpointUrl}");
    }

    private void SetState(UaConnectionState state, StatusCode reason, string message)
    {
        _state = state;
        StateChanged?.Invoke(this, new UaConnectionStateChange(state, _time.GetUtcNow().UtcDateTime, reason, message));
    }

    private ClientChannelSettings ChannelSettings => new()
    {
        EndpointUrl = _options.EndpointUrl,
        Limits = _options.Transport,
        ConnectTimeout = _options.ConnectTimeout,
        RequestedTokenLifetime = _options.TokenLifetime,
        ChannelRequestTimeout = _options.RequestTimeout,
    };

    /// <summary>Opens a channel and a session. On a reconnect the old session is reactivated when the server still has it.</summary>
    /// <returns>True when an existing session was reactivated.</returns>
    private async Task<bool> EstablishAsync(bool reconnect, CancellationToken cancellationToken)
    {
        var channel = new ClientSecureChannel(ChannelSettings, _time);
        try
        {
            await channel.OpenAsync(cancellationToken).ConfigureAwait(false);
            var endpoints = await channel.SendAsync<GetEndpointsResponse>(new GetEndpointsRequest
            {
                RequestHeader = channel.NewHeader(NodeId.Null, _options.RequestTimeout),
                EndpointUrl = _options.EndpointUrl.OriginalString,
                ProfileUris = [TransportProfileUri],
            }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
            var endpoint = ChooseEndpoint(endpoints.Endpoints);
            _tokenPolicy = ChooseTokenPolicy(endpoint);

            var restored = false;
            if (reconnect && !_authenticationToken.IsNull)
            {
                try
                {
                    await ActivateAsync(channel, cancellationToken).ConfigureAwait(false);
                    restored = true;
                }
                catch (ServiceResultException ex) when (!IsConnectionFailure(ex.Status))
                {
                    // The server lost the session (BadSessionIdInvalid after a restart): create a new one below.
                }
            }

            if (!restored)
            {
                var create = await channel.SendAsync<CreateSessionResponse>(new CreateSessionRequest
                {
                    RequestHeader = channel.NewHeader(NodeId.Null, _options.RequestTimeout),
                    ClientDescription = new ApplicationDescription
                    {
                        ApplicationUri = _options.ApplicationUri,
                        ProductUri = "urn:tieflow",
                        ApplicationName = new LocalizedText(_options.ApplicationName),
                        ApplicationType = ApplicationType.Client,
                    },
                    EndpointUrl = _options.EndpointUrl.OriginalString,
                    SessionName = _options.SessionName,
                    ClientNonce = RandomNumberGenerator.GetBytes(32),
                    RequestedSessionTimeout = _options.SessionTimeout.TotalMilliseconds,
                    MaxResponseMessageSize = 0,
                }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
                _authenticationToken = create.AuthenticationToken;
                await ActivateAsync(channel, cancellationToken).ConfigureAwait(false);
            }

            var old = Interlocked.Exchange(ref _channel, channel);
            if (old is not null)
            {
                await old.DisposeAsync().ConfigureAwait(false);
            }

            _ = WatchChannelAsync(channel);
            _namespaceUris = await ReadNamespaceArrayAsync(cancellationToken).ConfigureAwait(false);
            return restored;
        }
        catch
        {
            await channel.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    private async Task WatchChannelAsync(ClientSecureChannel channel)
    {
        var failure = await channel.Completion.ConfigureAwait(false);
        if (ReferenceEquals(_channel, channel) && !_closing.IsCancellationRequested)
        {
            TriggerReconnect(failure?.Status ?? StatusCodes.BadSecureChannelClosed, failure?.Message ?? "The secure channel closed");
        }
    }

    private static EndpointDescription ChooseEndpoint(EndpointDescription[] endpoints)
    {
        // Chosen by mode, policy and transport, never by the advertised host (docs/opcua.md §1.6, §5).
        var none = endpoints.Where(e => e.SecurityMode == MessageSecurityMode.None
                && string.Equals(e.SecurityPolicyUri, SecureChannelCodec.SecurityPolicyNoneUri, StringComparison.Ordinal)
                && (string.IsNullOrEmpty(e.TransportProfileUri) || string.Equals(e.TransportProfileUri, TransportProfileUri, StringComparison.Ordinal)))
            .ToArray();
        if (none.Length == 0)
        {
            throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected,
                $"The server offers no SecurityPolicy None endpoint ({endpoints.Length} endpoints); signed and encrypted channels come with the security work");
        }

        return none[0];
    }

    private UserTokenPolicy ChooseTokenPolicy(EndpointDescription endpoint)
    {
        var identity = _options.Identity;
        if (identity.TokenType == UserTokenType.Anonymous)
        {
            return endpoint.UserIdentityTokens.FirstOrDefault(p => p.TokenType == UserTokenType.Anonymous)
                ?? throw new ServiceResultException(StatusCodes.BadIdentityTokenRejected, $"The server's None endpoint {endpoint.EndpointUrl} offers no anonymous login; give a user name");
        }

        var policies = endpoint.UserIdentityTokens.Where(p => p.TokenType == UserTokenType.UserName).ToArray();
        if (policies.Length == 0)
        {
            throw new ServiceResultException(StatusCodes.BadIdentityTokenRejected, $"The server's None endpoint {endpoint.EndpointUrl} offers no user name login");
        }

        // The token policy's security policy applies, or the channel's when it is empty (OPC 10000-4 §7.42).
        var plain = policies.FirstOrDefault(p => string.IsNullOrEmpty(p.SecurityPolicyUri)
            || string.Equals(p.SecurityPolicyUri, SecureChannelCodec.SecurityPolicyNoneUri, StringComparison.Ordinal));
        if (plain is null)
        {
            throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected,
                $"The server requires the password of {identity} to be encrypted with {policies[0].SecurityPolicyUri}; encrypted user name tokens come with the security work (only SecurityPolicy None is implemented)");
        }

        return plain;
    }

    private async Task ActivateAsync(ClientSecureChannel channel, CancellationToken cancellationToken)
    {
        IEncodeable token = _options.Identity.TokenType == UserTokenType.Anonymous
            ? new AnonymousIdentityToken { PolicyId = _tokenPolicy!.PolicyId }
            : new UserNameIdentityToken
            {
                PolicyId = _tokenPolicy!.PolicyId,
                UserName = _options.Identity.UserName,
                Password = System.Text.Encoding.UTF8.GetBytes(_options.Identity.Password),
                EncryptionAlgorithm = null,
            };
        try
        {
            await channel.SendAsync<ActivateSessionResponse>(new ActivateSessionRequest
            {
                RequestHeader = channel.NewHeader(_authenticationToken, _options.RequestTimeout),
                LocaleIds = ["en"],
                UserIdentityToken = new ExtensionObject(new NodeId(token.BinaryEncodingId), ExtensionObjectEncoding.Binary, token),
            }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
        }
        catch (ServiceResultException ex)
        {
            // The message names the identity (user name only) and the status; never the password.
            throw new ServiceResultException(ex.Status, $"ActivateSession as {_options.Identity} failed", ex);
        }
    }

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

    /// <summary>Creates a subscription with monitored nodes. Per-node errors do not fail the call: see <see cref="UaSubscription.Items"/>.</summary>
    /// <param name="settings">Requested subscription parameters.</param>
    /// <param name="nodes">The nodes to monitor (keys must be unique).</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>The subscription; read <see cref="UaSubscription.Events"/>.</returns>
    /// <exception cref="ArgumentException">Two nodes have the same key.</exception>
    /// <exception cref="ServiceResultException">The server refused the subscription or the client is not connected.</exception>
    public async Task<UaSubscription> SubscribeAsync(SubscriptionSettings settings, IEnumerable<MonitoredNode> nodes, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(nodes);
        var subscription = new UaSubscription(this, settings);
        await CreateOnServerAsync(subscription, cancellationToken).ConfigureAwait(false);
        lock (_subscriptions)
        {
            _subscriptions.Add(subscription);
        }

        try
        {
            await AddNodesAsync(subscription, nodes, cancellationToken).ConfigureAwait(false);
        }
        catch
        {
            await subscription.DisposeAsync().ConfigureAwait(false);
            throw;
        }

        _subscriptionAdded.Release(_options.PublishRequestCount);
        return subscription;
    }

    private async Task CreateOnServerAsync(UaSubscription subscription, CancellationToken cancellationToken)
    {
        var s = subscription.Settings;
        var response = await CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest
        {
            RequestedPublishingInterval = s.PublishingInterval.TotalMilliseconds,
            RequestedLifetimeCount = Math.Max(s.LifetimeCount, 3 * s.MaxKeepAliveCount),
            RequestedMaxKeepAliveCount = s.MaxKeepAliveCount,
            MaxNotificationsPerPublish = s.MaxNotificationsPerPublish,
            PublishingEnabled = true,
            Priority = s.Priority,
        }, "CreateSubscription", cancellationToken).ConfigureAwait(false);
        subscription.SubscriptionId = response.SubscriptionId;
        subscription.PublishingInterval = TimeSpan.FromMilliseconds(response.RevisedPublishingInterval);
        subscription.KeepAliveCount = response.RevisedMaxKeepAliveCount;
        subscription.LifetimeCount = response.RevisedLifetimeCount;
        subscription.LastSequenceNumber = 0;
        subscription.LastAliveTimestamp = _time.GetTimestamp();
        subscription.LastCompleteTime = _time.GetUtcNow().UtcDateTime;
    }

    internal async Task<IReadOnlyList<MonitoredNodeResult>> AddNodesAsync(UaSubscription subscription, IEnumerable<MonitoredNode> nodes, CancellationToken cancellationToken)
    {
        var existing = subscription.ItemStates.Select(i => i.Key).ToHashSet(StringComparer.Ordinal);
        var items = new List<MonitoredItemState>();
        foreach (var node in nodes)
        {
            ArgumentNullException.ThrowIfNull(node);
            var key = node.Key ?? node.Node.ToString();
            if (!existing.Add(key))
            {
                throw new ArgumentException($"Monitored node key '{key}' is used twice in the subscription.", nameof(nodes));
            }

            items.Add(new MonitoredItemState(node, key, Interlocked.Increment(ref _nextClientHandle)));
        }

        await CreateItemsAsync(subscription, items, cancellationToken).ConfigureAwait(false);
        foreach (var item in items)
        {
            subscription.AddItem(item);
        }

        return items.Select(i => new MonitoredNodeResult(i.Key, i.Request.Node, i.Status, i.RevisedSamplingInterval, i.RevisedQueueSize)).ToArray();
    }

    private async Task CreateItemsAsync(UaSubscription subscription, IReadOnlyList<MonitoredItemState> items, CancellationToken cancellationToken)
    {
        var toCreate = new List<(MonitoredItemState Item, NodeId Node)>();
        foreach (var item in items)
        {
            if (!TryResolveItem(item, out var nodeId))
            {
                item.Status = StatusCodes.BadNodeIdUnknown;
                continue;
            }

            toCreate.Add((item, nodeId));
        }

        for (var start = 0; start < toCreate.Count; start += 1000)
        {
            var batch = toCreate.Skip(start).Take(1000).ToArray();
            var response = await CallAsync<CreateMonitoredItemsResponse>(new CreateMonitoredItemsRequest
            {
                SubscriptionId = subscription.SubscriptionId,
                TimestampsToReturn = subscription.Settings.Timestamps,
                ItemsToCreate = batch.Select(b => ToCreateRequest(b.Item, b.Node)).ToArray(),
            }, "CreateMonitoredItems", cancellationToken).ConfigureAwait(false);
            if (response.Results.Length != batch.Length)
            {
                throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"CreateMonitoredItems of {batch.Length} items returned {response.Results.Length} results");
            }

            for (var i = 0; i < batch.Length; i++)
            {
                var r = response.Results[i];
                var item = batch[i].Item;
                item.Status = r.StatusCode;
                item.MonitoredItemId = r.MonitoredItemId;
                item.RevisedSamplingInterval = TimeSpan.FromMilliseconds(Math.Max(0, r.RevisedSamplingInterval));
                item.RevisedQueueSize = r.RevisedQueueSize;
            }
        }
    }

    /// <summary>Binds a node given by index to its namespace URI at first use, and resolves by URI afterwards (indexes can change between server runs).</summary>
    private bool TryResolveItem(MonitoredItemState item, out NodeId nodeId)
    {
        var node = item.Request.Node;
        if (!item.NamespaceBound)
        {
            if (node.NamespaceUri is not null)
            {
                item.NamespaceUri = node.NamespaceUri;
            }
            else if (node.NodeId.NamespaceIndex != 0)
            {
                if (node.NodeId.NamespaceIndex >= _namespaceUris.Length)
                {
                    nodeId = default;
                    return false;
                }

                item.NamespaceUri = _namespaceUris[node.NodeId.NamespaceIndex];
            }

            item.NamespaceBound = true;
        }

        if (item.NamespaceUri is null)
        {
            nodeId = node.NodeId;
            return true;
        }

        var index = Array.IndexOf(_namespaceUris, item.NamespaceUri);
        nodeId = index < 0 ? default : WithNamespace(node.NodeId, (ushort)index);
        return index >= 0;
    }

    private static MonitoredItemCreateRequest ToCreateRequest(MonitoredItemState item, NodeId node)
    {
        var r = item.Request;
        var filter = r.DeadbandType == DeadbandType.None && r.Trigger == DataChangeTrigger.StatusValue
            ? ExtensionObject.Null
            : new ExtensionObject(new NodeId(DataChangeFilter.EncodingId), ExtensionObjectEncoding.Binary,
                new DataChangeFilter { Trigger = r.Trigger, DeadbandType = (uint)r.DeadbandType, DeadbandValue = r.DeadbandValue });
        return new MonitoredItemCreateRequest
        {
            ItemToMonitor = new ReadValueId { NodeId = node, AttributeId = Attributes.Value },
            MonitoringMode = MonitoringMode.Reporting,
            RequestedParameters = new MonitoringParameters
            {
                ClientHandle = item.ClientHandle,
                SamplingInterval = r.SamplingInterval?.TotalMilliseconds ?? -1,
                Filter = filter,
                QueueSize = r.QueueSize,
                DiscardOldest = true,
            },
        };
    }

    internal async Task RemoveNodesAsync(UaSubscription subscription, IEnumerable<string> keys, CancellationToken cancellationToken)
    {
        var set = keys.ToHashSet(StringComparer.Ordinal);
        var items = subscription.ItemStates.Where(i => set.Contains(i.Key)).ToArray();
        var ids = items.Where(i => i.Status.IsGood).Select(i => i.MonitoredItemId).ToArray();
        foreach (var item in items)
        {
            subscription.RemoveItem(item.ClientHandle);
        }

        if (ids.Length > 0)
        {
            await CallAsync<DeleteMonitoredItemsResponse>(new DeleteMonitoredItemsRequest { SubscriptionId = subscription.SubscriptionId, MonitoredItemIds = ids }, "DeleteMonitoredItems", cancellationToken)
                .ConfigureAwait(false);
        }
    }

    internal async Task ModifySubscriptionAsync(UaSubscription subscription, SubscriptionSettings settings, CancellationToken cancellationToken)
    {
        var response = await CallAsync<ModifySubscriptionResponse>(new ModifySubscriptionRequest
        {
            SubscriptionId = subscription.SubscriptionId,
            RequestedPublishingInterval = settings.PublishingInterval.TotalMilliseconds,
            RequestedLifetimeCount = Math.Max(settings.LifetimeCount, 3 * settings.MaxKeepAliveCount),
            RequestedMaxKeepAliveCount = settings.MaxKeepAliveCount,
            MaxNotificationsPerPublish = settings.MaxNotificationsPerPublish,
            Priority = settings.Priority,
        }, "ModifySubscription", cancellationToken).ConfigureAwait(false);
        subscription.PublishingInterval = TimeSpan.FromMilliseconds(response.RevisedPublishingInterval);
        subscription.KeepAliveCount = response.RevisedMaxKeepAliveCount;
        subscription.LifetimeCount = response.RevisedLifetimeCount;
        subscription.LastAliveTimestamp = _time.GetTimestamp();
    }

    internal async Task DeleteSubscriptionAsync(UaSubscription subscription)
    {
        lock (_subscriptions)
        {
            _subscriptions.Remove(subscription);
        }

        if (_state != UaConnectionState.Connected || subscription.SubscriptionId == 0)
        {
            return;
        }

        try
        {
            await CallAsync<DeleteSubscriptionsResponse>(new DeleteSubscriptionsRequest { SubscriptionIds = [subscription.SubscriptionId] }, "DeleteSubscriptions", CancellationToken.None)
                .ConfigureAwait(false);
        }
        catch (ServiceResultException)
        {
            // The subscription is gone from the client; the server drops it at the end of its lifetime anyway.
        }
    }

    private UaSubscription[] Subscriptions()
    {
        lock (_subscriptions)
        {
            return [.. _subscriptions];
        }
    }

    private UaSubscription? FindSubscription(uint id)
    {
        lock (_subscriptions)
        {
            return _subscriptions.FirstOrDefault(s => s.SubscriptionId == id);
        }
    }

    private void StartPublishing()
    {
        var cts = CancellationTokenSource.CreateLinkedTokenSource(_closing.Token);
        var old = Interlocked.Exchange(ref _publishing, cts);
        old?.Cancel();
        var channel = _channel!;
        for (var i = 0; i < _publishTarget; i++)
        {
            Interlocked.Increment(ref _activePublishers);
            _ = Task.Run(() => PublishLoopAsync(channel, cts.Token), CancellationToken.None);
        }

        if (Subscriptions().Length > 0)
        {
            _subscriptionAdded.Release(_publishTarget);
        }
    }

    private TimeSpan PublishTimeout()
    {
        var longest = Subscriptions().Select(s => s.KeepAlivePeriod).DefaultIfEmpty(TimeSpan.Zero).Max();

        // A server may park a Publish up to N keep-alive periods (docs/opcua.md §1.11 step 6).
        return (longest * (_publishTarget + 1)) + _options.RequestTimeout;
    }

    private async Task PublishLoopAsync(ClientSecureChannel channel, CancellationToken cancellationToken)
    {
        try
        {
            while (!cancellationToken.IsCancellationRequested)
            {
                if (Subscriptions().Length == 0)
                {
                    await _subscriptionAdded.WaitAsync(cancellationToken).ConfigureAwait(false);
                    continue;
                }

                var acks = new List<SubscriptionAcknowledgement>();
                while (acks.Count < 100 && _acks.TryDequeue(out var ack))
                {
                    acks.Add(ack);
                }

                var timeout = PublishTimeout();
                var request = new PublishRequest { RequestHeader = channel.NewHeader(_authenticationToken, timeout - _options.RequestTimeout), SubscriptionAcknowledgements = [.. acks] };
                PublishResponse response;
                try
                {
                    response = await channel.SendAsync<PublishResponse>(request, timeout, cancellationToken, completeOnReceiveThread: true).ConfigureAwait(false);
                }
                catch (ServiceResultException ex)
                {
                    foreach (var ack in acks)
                    {
                        _acks.Enqueue(ack);
                    }

                    var code = ex.Status.CodeWithoutFlags;
                    if (code == StatusCodes.BadTimeout.Code || code == StatusCodes.BadRequestTimeout.Code)
                    {
                        continue;
                    }

                    if (code == StatusCodes.BadNoSubscription.Code)
                    {
                        // The session lives but the server has none of our subscriptions: they were lost, create them again.
                        foreach (var lost in Subscriptions())
                        {
                            _ = Task.Run(() => RecreateAsync(lost, $"the server no longer knows subscription {lost.SubscriptionId}"), CancellationToken.None);
                        }

                        await Task.Delay(TimeSpan.FromMilliseconds(200), _time, cancellationToken).ConfigureAwait(false);
                        continue;
                    }

                    if (code == StatusCodes.BadTooManyPublishRequests.Code)
                    {
                        // Keep one fewer request outstanding from now on.
                        if (Volatile.Read(ref _activePublishers) > 1)
                        {
                            Interlocked.Decrement(ref _publishTarget);
                            return;
                        }

                        continue;
                    }

                    TriggerReconnect(ex.Status, $"Publish failed: {ex.Message}");
                    return;
                }

                await HandlePublishResponseAsync(channel, response, cancellationToken).ConfigureAwait(false);
            }
        }
        catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
        {
            // The session ended or a reconnect started; a new set of loops takes over.
        }
        finally
        {
            Interlocked.Decrement(ref _activePublishers);
        }
    }

    private async Task HandlePublishResponseAsync(ClientSecureChannel channel, PublishResponse response, CancellationToken cancellationToken)
    {
        var subscription = FindSubscription(response.SubscriptionId);
        var message = response.NotificationMessage;
        var isKeepAlive = message.NotificationData.Length == 0;
        if (subscription is null)
        {
            if (!isKeepAlive)
            {
                _acks.Enqueue(new SubscriptionAcknowledgement { SubscriptionId = response.SubscriptionId, SequenceNumber = message.SequenceNumber });
            }

            return;
        }

        var missing = new List<uint>();
        lock (subscription.SyncRoot)
        {
            subscription.LastAliveTimestamp = _time.GetTimestamp();
            var seq = message.SequenceNumber;

            // A keep-alive carries the number the next data message will use, so it consumes nothing (docs/opcua.md §1.11):
            // either way every number below seq should have arrived.
            var last = subscription.LastSequenceNumber;
            if (last != 0 && seq > last + 1 && seq - last < 1000)
            {
                for (var m = last + 1; m < seq; m++)
                {
                    if (!subscription.WasDelivered(m))
                    {
                        missing.Add(m);
                    }
                }
            }

            if (!isKeepAlive)
            {
                _acks.Enqueue(new SubscriptionAcknowledgement { SubscriptionId = subscription.SubscriptionId, SequenceNumber = seq });
                if (subscription.MarkDelivered(seq))
                {
                    Deliver(subscription, message);
                }
            }

            subscription.LastSequenceNumber = Math.Max(last, isKeepAlive ? seq - 1 : seq);
            if (missing.Count == 0)
            {
                subscription.LastCompleteTime = _time.GetUtcNow().UtcDateTime;
            }
        }

        if (missing.Count > 0)
        {
            await RepublishAsync(channel, subscription, missing, cancellationToken).ConfigureAwait(false);
        }
    }

    private async Task RepublishAsync(ClientSecureChannel channel, UaSubscription subscription, List<uint> missing, CancellationToken cancellationToken)
    {
        foreach (var seq in missing)
        {
            try
            {
                var request = new RepublishRequest { RequestHeader = channel.NewHeader(_authenticationToken, _options.RequestTimeout), SubscriptionId = subscription.SubscriptionId, RetransmitSequenceNumber = seq };
                var response = await channel.SendAsync<RepublishResponse>(request, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
                lock (subscription.SyncRoot)
                {
                    _acks.Enqueue(new SubscriptionAcknowledgement { SubscriptionId = subscription.SubscriptionId, SequenceNumber = seq });
                    if (subscription.MarkDelivered(seq))
                    {
                        Deliver(subscription, response.NotificationMessage);
                    }
                }
            }
            catch (ServiceResultException ex) when (!IsConnectionFailure(ex.Status))
            {
                if (subscription.WasDelivered(seq))
                {
                    continue;
                }

                subscription.ReportGap(subscription.LastCompleteTime, _time.GetUtcNow().UtcDateTime,
                    $"Notification messages {seq}..{missing[^1]} of subscription {subscription.SubscriptionId} were lost and could not be republished ({ex.Status})");
                break;
            }
        }

        subscription.LastCompleteTime = _time.GetUtcNow().UtcDateTime;
    }

    private void Deliver(UaSubscription subscription, NotificationMessage message)
    {
        foreach (var data in message.NotificationData)
        {
            switch (data.Body)
            {
                case DataChangeNotification dcn:
                    subscription.Deliver(dcn);
                    break;
                case StatusChangeNotification status when status.Status.IsBad:
                    // BadTimeout: the server dropped the subscription (its lifetime ran out): create it again.
                    _ = Task.Run(() => RecreateAsync(subscription, $"the server ended subscription {subscription.SubscriptionId} ({status.Status})"), CancellationToken.None);
                    break;
            }
        }
    }

    private void CheckWatchdog()
    {
        if (_state != UaConnectionState.Connected)
        {
            return;
        }

        var now = _time.GetTimestamp();
        var subscriptions = Subscriptions();
        if (subscriptions.Length == 0 && _time.GetElapsedTime(Volatile.Read(ref _lastSessionKeepAlive), now) > _options.SessionTimeout / 3)
        {
            // Without subscriptions no Publish keeps the session alive or proves the server is there: read the server state.
            Volatile.Write(ref _lastSessionKeepAlive, now);
            _ = KeepSessionAliveAsync();
        }

        foreach (var s in subscriptions)
        {
            var allowed = (s.KeepAlivePeriod * 1.5) + _options.KeepAliveMargin;
            var silent = _time.GetElapsedTime(s.LastAliveTimestamp, now);
            if (silent > allowed)
            {
                TriggerReconnect(StatusCodes.BadTimeout, $"No data or keep-alive from the server for {silent.TotalSeconds:F1} s (allowed {allowed.TotalSeconds:F1} s)");
                return;
            }
        }
    }

    private async Task KeepSessionAliveAsync()
    {
        try
        {
            await ReadAsync([WellKnownNodes.ServerStatusState], Attributes.Value, _closing.Token).ConfigureAwait(false);
        }
        catch (ServiceResultException ex) when (IsConnectionFailure(ex.Status) || ex.Status.Is(StatusCodes.BadSessionIdInvalid) || ex.Status.Is(StatusCodes.BadSessionClosed))
        {
            TriggerReconnect(ex.Status, $"The session keep-alive read failed: {ex.Message}");
        }
        catch (Exception ex) when (ex is ServiceResultException or OperationCanceledException)
        {
            // Another failure of one read (or closing): the next tick tries again.
        }
    }

    private static bool IsConnectionFailure(StatusCode status)
    {
        var c = status.CodeWithoutFlags;
        return c == StatusCodes.BadConnectionClosed.Code || c == StatusCodes.BadSecureChannelClosed.Code || c == StatusCodes.BadSecureChannelIdInvalid.Code
            || c == StatusCodes.BadCommunicationError.Code || c == StatusCodes.BadNotConnected.Code || c == StatusCodes.BadServerNotConnected.Code
            || c == StatusCodes.BadRequestTimeout.Code || c == StatusCodes.BadTcpSecureChannelUnknown.Code || c == StatusCodes.BadSecureChannelTokenUnknown.Code
            || c == StatusCodes.BadSequenceNumberInvalid.Code || c == StatusCodes.BadTimeout.Code;
    }

    private void TriggerReconnect(StatusCode reason, string message)
    {
        if (_closing.IsCancellationRequested || _state == UaConnectionState.Disconnected || Interlocked.CompareExchange(ref _reconnecting, 1, 0) != 0)
        {
            return;
        }

        SetState(UaConnectionState.Reconnecting, reason, message);
        _publishing?.Cancel();
        var lostAt = _time.GetUtcNow().UtcDateTime;
        _reconnect = Task.Run(() => ReconnectLoopAsync(lostAt), CancellationToken.None);
    }

    private async Task ReconnectLoopAsync(DateTime lostAt)
    {
        var old = Interlocked.Exchange(ref _channel, null);
        if (old is not null)
        {
            await old.DisposeAsync().ConfigureAwait(false);
        }

        var delay = _options.ReconnectMinDelay;
        while (!_closing.IsCancellationRequested)
        {
            try
            {
                var restored = await EstablishAsync(true, _closing.Token).ConfigureAwait(false);
                await RecoverSubscriptionsAsync(restored, lostAt, _closing.Token).ConfigureAwait(false);
                ReconnectCount++;
                Volatile.Write(ref _reconnecting, 0);
                _publishTarget = Math.Max(_publishTarget, 1);
                SetState(UaConnectionState.Connected, StatusCodes.Good, restored ? "Reconnected; the session was reactivated" : "Reconnected with a new session");
                StartPublishing();
                return;
            }
            catch (OperationCanceledException) when (_closing.IsCancellationRequested)
            {
                return;
            }
            catch (Exception ex) when (ex is ServiceResultException or IOException or ObjectDisposedException or InvalidOperationException)
            {
                // Boundary of the reconnect loop: every failure is retried after the backoff.
                var failed = Interlocked.Exchange(ref _channel, null);
                if (failed is not null)
                {
                    await failed.DisposeAsync().ConfigureAwait(false);
                }

                SetState(UaConnectionState.Reconnecting, (ex as ServiceResultException)?.Status ?? StatusCodes.BadCommunicationError, $"Reconnect failed, next attempt in {delay}: {ex.Message}");
            }

            try
            {
                await Task.Delay(delay, _time, _closing.Token).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }

            delay = TimeSpan.FromTicks(Math.Min(delay.Ticks * 2, _options.ReconnectMaxDelay.Ticks));
        }
    }

    private async Task RecoverSubscriptionsAsync(bool sessionRestored, DateTime lostAt, CancellationToken cancellationToken)
    {
        var subscriptions = Subscriptions();
        if (subscriptions.Length == 0)
        {
            return;
        }

        if (sessionRestored)
        {
            // The server kept the session and its subscriptions: Republish fills what was missed (docs/opcua.md §1.13 step 5).
            // Nothing is lost, but the plant was not observed live meanwhile (a frozen server samples nothing), so the
            // interval is still reported for the store to mark.
            var restoredAt = _time.GetUtcNow().UtcDateTime;
            foreach (var s in subscriptions)
            {
                s.LastAliveTimestamp = _time.GetTimestamp();
                var from = s.LastCompleteTime == default || s.LastCompleteTime > lostAt ? lostAt : s.LastCompleteTime;
                s.ReportGap(from, restoredAt, $"The connection was interrupted; the session was reactivated and subscription {s.SubscriptionId} republishes what the server queued", notificationsMayBeMissing: false);
            }

            return;
        }

        var transferred = new HashSet<UaSubscription>();
        try
        {
            var response = await CallAsync<TransferSubscriptionsResponse>(new TransferSubscriptionsRequest
            {
                SubscriptionIds = subscriptions.Select(s => s.SubscriptionId).ToArray(),
                SendInitialValues = true,
            }, "TransferSubscriptions", cancellationToken).ConfigureAwait(false);
            for (var i = 0; i < Math.Min(response.Results.Length, subscriptions.Length); i++)
            {
                if (response.Results[i].StatusCode.IsGood)
                {
                    transferred.Add(subscriptions[i]);
                }
            }
        }
        catch (ServiceResultException ex) when (!IsConnectionFailure(ex.Status))
        {
            // BadServiceUnsupported or similar: recreate everything below.
        }

        var now = _time.GetUtcNow().UtcDateTime;
        foreach (var s in subscriptions)
        {
            var from = s.LastCompleteTime < lostAt ? s.LastCompleteTime : lostAt;
            if (transferred.Contains(s))
            {
                s.LastAliveTimestamp = _time.GetTimestamp();
                s.ReportGap(from, now, $"The session was lost; subscription {s.SubscriptionId} was transferred to a new session");
                continue;
            }

            var oldId = s.SubscriptionId;
            await RecreateCoreAsync(s, cancellationToken).ConfigureAwait(false);
            s.ReportGap(from, _time.GetUtcNow().UtcDateTime, $"The session was lost; subscription {oldId} was recreated as {s.SubscriptionId}");
        }
    }

    private async Task RecreateCoreAsync(UaSubscription s, CancellationToken cancellationToken)
    {
        lock (s.SyncRoot)
        {
            s.ForgetSequenceNumbers();
        }

        await CreateOnServerAsync(s, cancellationToken).ConfigureAwait(false);
        await CreateItemsAsync(s, s.ItemStates, cancellationToken).ConfigureAwait(false);
    }

    private async Task RecreateAsync(UaSubscription s, string reason)
    {
        if (Interlocked.CompareExchange(ref s.RecreatingFlag, 1, 0) != 0)
        {
            return;
        }

        try
        {
            var from = s.LastCompleteTime;
            var oldId = s.SubscriptionId;
            s.SubscriptionId = 0;
            await RecreateCoreAsync(s, _closing.Token).ConfigureAwait(false);
            s.ReportGap(from, _time.GetUtcNow().UtcDateTime, $"Subscription {oldId} was recreated as {s.SubscriptionId}: {reason}");
        }
        catch (Exception ex) when (ex is ServiceResultException or OperationCanceledException)
        {
            // Not connected: the reconnect path recreates it.
        }
        finally
        {
            Volatile.Write(ref s.RecreatingFlag, 0);
        }
    }

    /// <summary>Closes the session (deleting its subscriptions on the server) and the channel, and completes every subscription's events.</summary>
    /// <returns>A task that completes when closed.</returns>
    public async Task CloseAsync()
    {
        if (_closing.IsCancellationRequested)
        {
            return;
        }

        var wasConnected = _state == UaConnectionState.Connected;
        _closing.Cancel();
        _watchdog?.Dispose();
        _publishing?.Cancel();
        var channel = Interlocked.Exchange(ref _channel, null);
        if (channel is not null)
        {
            if (wasConnected)
            {
                try
                {
                    var request = new CloseSessionRequest { RequestHeader = channel.NewHeader(_authenticationToken, _options.RequestTimeout), DeleteSubscriptions = true };
                    await channel.SendAsync<CloseSessionResponse>(request, _options.RequestTimeout, CancellationToken.None).ConfigureAwait(false);
                }
                catch (ServiceResultException)
                {
                    // Closing anyway: the server ends the session when its timeout runs out.
                }
            }

            await channel.DisposeAsync().ConfigureAwait(false);
        }

        if (_reconnect is not null)
        {
            await _reconnect.ConfigureAwait(false);
        }

        foreach (var s in Subscriptions())
        {
            s.Complete();
        }

        SetState(UaConnectionState.Disconnected, StatusCodes.Good, "Closed");
    }

    /// <summary>Same as <see cref="CloseAsync"/>.</summary>
    /// <returns>A task that completes when closed.</returns>
    public async ValueTask DisposeAsync()
    {
        await CloseAsync().ConfigureAwait(false);
        _closing.Dispose();
    }
}

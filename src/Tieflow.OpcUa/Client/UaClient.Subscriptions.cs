using Tieflow.OpcUa.Diagnostics;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <content>Subscriptions and monitored items: create, add, remove, modify, delete.</content>
public sealed partial class UaClient
{
    /// <summary>Creates a subscription with monitored nodes. Per-node errors do not fail the call: see <see cref="UaSubscription.Items"/>.</summary>
    /// <param name="settings">Requested subscription parameters.</param>
    /// <param name="nodes">The nodes to monitor (keys must be unique).</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>The subscription; read <see cref="UaSubscription.Events"/>.</returns>
    /// <exception cref="ArgumentException">Two nodes have the same key, or the event queue capacity is not positive.</exception>
    /// <exception cref="ServiceResultException">The server refused the subscription or the client is not connected.</exception>
    public async Task<UaSubscription> SubscribeAsync(SubscriptionSettings settings, IEnumerable<MonitoredNode> nodes, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(nodes);
        if (settings.EventQueueCapacity < 1)
        {
            throw new ArgumentException($"SubscriptionSettings.EventQueueCapacity is {settings.EventQueueCapacity}; expected at least 1.", nameof(settings));
        }

        var subscription = new UaSubscription(this, settings);
        UaDiagnostics.Track(subscription);
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
}

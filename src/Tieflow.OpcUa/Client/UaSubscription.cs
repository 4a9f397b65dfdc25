using System.Threading.Channels;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>
/// A subscription with its monitored nodes, created by <see cref="UaClient.SubscribeAsync"/>. Values arrive on
/// <see cref="Events"/> as <see cref="UaDataChange"/>s, and intervals in which values may be missing as
/// <see cref="UaDataGap"/>s. The subscription survives reconnects: the client restores, transfers or recreates it.
/// </summary>
public sealed class UaSubscription : IAsyncDisposable
{
    private readonly UaClient _client;
    private readonly Channel<UaSubscriptionEvent> _events = Channel.CreateUnbounded<UaSubscriptionEvent>(new UnboundedChannelOptions { SingleWriter = false });
    private readonly Lock _lock = new();
    private readonly Dictionary<uint, MonitoredItemState> _byHandle = [];

    internal UaSubscription(UaClient client, SubscriptionSettings settings)
    {
        _client = client;
        Settings = settings;
    }

    /// <summary>Data changes and gaps, in arrival order. Unbounded: read it promptly. Completes when the subscription is disposed or the client closed.</summary>
    public ChannelReader<UaSubscriptionEvent> Events => _events.Reader;

    /// <summary>The requested settings.</summary>
    public SubscriptionSettings Settings { get; private set; }

    /// <summary>The publishing interval the server chose.</summary>
    public TimeSpan PublishingInterval { get; internal set; }

    /// <summary>The keep-alive count the server chose.</summary>
    public uint KeepAliveCount { get; internal set; }

    /// <summary>The lifetime count the server chose.</summary>
    public uint LifetimeCount { get; internal set; }

    /// <summary>The server's id of the subscription (changes when it is recreated).</summary>
    public uint SubscriptionId { get; internal set; }

    /// <summary>How the server took each monitored node (per-item errors included), in the order they were added.</summary>
    public IReadOnlyList<MonitoredNodeResult> Items
    {
        get
        {
            lock (_lock)
            {
                return _byHandle.Values.OrderBy(i => i.ClientHandle)
                    .Select(i => new MonitoredNodeResult(i.Key, i.Request.Node, i.Status, i.RevisedSamplingInterval, i.RevisedQueueSize)).ToArray();
            }
        }
    }

    private readonly HashSet<uint> _recent = [];
    private readonly Queue<uint> _recentOrder = new();

    internal uint LastSequenceNumber { get; set; }

    internal Lock SyncRoot => _lock;

    /// <summary>Remembers a delivered sequence number (the last 1000); false when it was delivered already.</summary>
    internal bool MarkDelivered(uint sequenceNumber)
    {
        if (!_recent.Add(sequenceNumber))
        {
            return false;
        }

        _recentOrder.Enqueue(sequenceNumber);
        if (_recentOrder.Count > 1000)
        {
            _recent.Remove(_recentOrder.Dequeue());
        }

        return true;
    }

    internal bool WasDelivered(uint sequenceNumber) => _recent.Contains(sequenceNumber);

    internal void ForgetSequenceNumbers()
    {
        _recent.Clear();
        _recentOrder.Clear();
        LastSequenceNumber = 0;
    }

    internal long LastAliveTimestamp { get; set; }

    internal DateTime LastCompleteTime { get; set; }

    internal bool IsDisposed { get; private set; }

#pragma warning disable SA1401, IDE1006 // A field so that Interlocked can guard one recreation at a time.
    internal int RecreatingFlag;
#pragma warning restore SA1401, IDE1006

    internal TimeSpan KeepAlivePeriod => PublishingInterval * Math.Max(1u, KeepAliveCount);

    internal IReadOnlyList<MonitoredItemState> ItemStates
    {
        get
        {
            lock (_lock)
            {
                return _byHandle.Values.OrderBy(i => i.ClientHandle).ToArray();
            }
        }
    }

    internal void AddItem(MonitoredItemState item)
    {
        lock (_lock)
        {
            _byHandle[item.ClientHandle] = item;
        }
    }

    internal void RemoveItem(uint clientHandle)
    {
        lock (_lock)
        {
            _byHandle.Remove(clientHandle);
        }
    }

    internal void Deliver(DataChangeNotification notification)
    {
        foreach (var n in notification.MonitoredItems)
        {
            MonitoredItemState? item;
            lock (_lock)
            {
                _byHandle.TryGetValue(n.ClientHandle, out item);
            }

            if (item is null)
            {
                continue;
            }

            var v = n.Value;
            _events.Writer.TryWrite(new UaDataChange(item.Key, item.Request.Node, v.Value, v.Status, v.SourceTimestamp, v.ServerTimestamp));
        }
    }

    internal void ReportGap(DateTime from, DateTime to, string reason, bool notificationsMayBeMissing = true) =>
        _events.Writer.TryWrite(new UaDataGap(from, to, reason) { NotificationsMayBeMissing = notificationsMayBeMissing });

    internal void Complete() => _events.Writer.TryComplete();

    /// <summary>Adds nodes to the subscription.</summary>
    /// <param name="nodes">The nodes.</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>How the server took each new node.</returns>
    /// <exception cref="ServiceResultException">The call failed as a whole (the client is not connected, the server refused it).</exception>
    public Task<IReadOnlyList<MonitoredNodeResult>> AddNodesAsync(IEnumerable<MonitoredNode> nodes, CancellationToken cancellationToken = default) =>
        _client.AddNodesAsync(this, nodes, cancellationToken);

    /// <summary>Removes nodes by their keys (unknown keys are ignored).</summary>
    /// <param name="keys">The keys.</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>A task that completes when the server has deleted the items.</returns>
    public Task RemoveNodesAsync(IEnumerable<string> keys, CancellationToken cancellationToken = default) =>
        _client.RemoveNodesAsync(this, keys, cancellationToken);

    /// <summary>Changes the publishing interval, keep-alive and lifetime counts.</summary>
    /// <param name="settings">The new settings (Timestamps is kept from creation).</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    /// <returns>A task that completes when the server has revised the values.</returns>
    public async Task ModifyAsync(SubscriptionSettings settings, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(settings);
        await _client.ModifySubscriptionAsync(this, settings, cancellationToken).ConfigureAwait(false);
        Settings = settings;
    }

    /// <summary>Deletes the subscription on the server (when connected) and completes <see cref="Events"/>.</summary>
    /// <returns>A task that completes when done.</returns>
    public async ValueTask DisposeAsync()
    {
        if (IsDisposed)
        {
            return;
        }

        IsDisposed = true;
        await _client.DeleteSubscriptionAsync(this).ConfigureAwait(false);
        Complete();
    }
}

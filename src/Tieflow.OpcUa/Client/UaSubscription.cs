using System.Threading.Channels;
using Tieflow.OpcUa.Diagnostics;
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
    private readonly Channel<UaSubscriptionEvent> _events;
    private readonly Lock _lock = new();
    private readonly Lock _dropLock = new();
    private long _dropped;
    private long _droppedTotal;
    private long _reported;
    private DateTime _droppedFrom = DateTime.MaxValue;
    private DateTime _droppedTo = DateTime.MinValue;
    private bool _gapDropped;
    private readonly Dictionary<uint, MonitoredItemState> _byHandle = [];

    internal UaSubscription(UaClient client, SubscriptionSettings settings)
    {
        _client = client;
        Settings = settings;
        // Bounded: a reader that falls behind loses the oldest events, and each loss is reported as a gap.
        _events = Channel.CreateBounded<UaSubscriptionEvent>(
            new BoundedChannelOptions(settings.EventQueueCapacity) { FullMode = BoundedChannelFullMode.DropOldest, SingleReader = false, SingleWriter = false },
            OnDropped);
    }

    /// <summary>Data changes dropped so far because the reader fell behind (each run of drops is reported as a <see cref="UaDataGap"/>).</summary>
    public long DroppedEvents => Interlocked.Read(ref _droppedTotal);

    /// <summary>
    /// Data changes and gaps, in arrival order, at most <see cref="SubscriptionSettings.EventQueueCapacity"/> waiting:
    /// when the reader falls behind the oldest are dropped and a <see cref="UaDataGap"/> names the interval they
    /// covered. Completes when the subscription is disposed or the client closed.
    /// </summary>
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
            Write(new UaDataChange(item.Key, item.Request.Node, v.Value, v.Status, v.SourceTimestamp, v.ServerTimestamp));
        }

        UaDiagnostics.Notifications.Add(notification.MonitoredItems.Length);

        FlushDrops();
    }

    internal void ReportGap(DateTime from, DateTime to, string reason, bool notificationsMayBeMissing = true)
    {
        Write(new UaDataGap(from, to, reason) { NotificationsMayBeMissing = notificationsMayBeMissing });
        FlushDrops();
    }

    private void Write(UaSubscriptionEvent e) => _events.Writer.TryWrite(e);

    /// <summary>Called by the channel (under its lock) for each event it drops: only recorded here, reported by <see cref="FlushDrops"/>.</summary>
    private void OnDropped(UaSubscriptionEvent e)
    {
        lock (_dropLock)
        {
            switch (e)
            {
                case UaDataChange change:
                    Interlocked.Increment(ref _dropped);
                    Interlocked.Increment(ref _droppedTotal);
                    UaDiagnostics.Dropped.Add(1);
                    var t = change.ServerTime != DateTime.MinValue ? change.ServerTime : change.SourceTime;
                    if (t != DateTime.MinValue)
                    {
                        _droppedFrom = t < _droppedFrom ? t : _droppedFrom;
                        _droppedTo = t > _droppedTo ? t : _droppedTo;
                    }

                    break;
                case UaDataGap gap:
                    // A dropped gap is folded into the next one, so that no gap is ever lost.
                    Interlocked.Add(ref _dropped, gap.DroppedEvents);
                    _gapDropped = true;
                    _droppedFrom = gap.From < _droppedFrom ? gap.From : _droppedFrom;
                    _droppedTo = gap.To > _droppedTo ? gap.To : _droppedTo;
                    break;
            }
        }
    }

    /// <summary>
    /// After a batch: one gap for the events dropped since the last one. Writing it may drop one more event, which
    /// the next batch's gap reports.
    /// </summary>
    private void FlushDrops()
    {
        UaDataGap gap;
        lock (_dropLock)
        {
            var dropped = Interlocked.Read(ref _dropped);
            if (dropped == _reported && !_gapDropped)
            {
                return;
            }

            var now = _client.UtcNow;
            var from = _droppedFrom == DateTime.MaxValue ? now : _droppedFrom;
            var to = _droppedTo == DateTime.MinValue ? now : _droppedTo;
            gap = new UaDataGap(from, to,
                $"{dropped - _reported} data changes of subscription {SubscriptionId} were dropped: the reader fell behind the queue of {Settings.EventQueueCapacity}" +
                (_gapDropped ? " (an earlier gap is included)" : string.Empty))
            {
                DroppedEvents = dropped - _reported,
            };
            _reported = dropped;
            _droppedFrom = DateTime.MaxValue;
            _droppedTo = DateTime.MinValue;
            _gapDropped = false;
        }

        _events.Writer.TryWrite(gap);
    }

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

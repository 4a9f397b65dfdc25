using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// A subscription (OPC 10000-4 §5.13.1): on each publishing cycle it sends the queued notifications of its items, or a
/// keep-alive after <see cref="MaxKeepAliveCount"/> empty cycles, through a Publish request its session has parked;
/// it expires after <see cref="LifetimeCount"/> cycles without one. Not thread-safe: called under the server's lock.
/// </summary>
internal sealed class ServerSubscription : IDisposable
{
    private const int RetransmissionQueueSize = 64;

    private readonly LinkedList<NotificationMessageData> _retransmission = new();
    private uint _nextSequenceNumber = 1;
    private uint _keepAliveCounter;
    private uint _lifetimeCounter;
    private bool _needsKeepAlive;
    private bool _firstMessageSent;

    public ServerSubscription(uint id, ServerSession session, ServerSubscriptionSettings settings)
    {
        Id = id;
        Session = session;
        Settings = settings;
    }

    public uint Id { get; }

    public ServerSession Session { get; set; }

    public ServerSubscriptionSettings Settings { get; set; }

    public uint LifetimeCount => Settings.LifetimeCount;

    public uint MaxKeepAliveCount => Settings.MaxKeepAliveCount;

    public bool PublishingEnabled { get; set; } = true;

    public Dictionary<uint, ServerMonitoredItem> Items { get; } = [];

    /// <summary>The publishing timer, owned by the subscription.</summary>
    public ITimer? Timer { get; set; }

    public bool HasNotifications
    {
        get
        {
            foreach (var item in Items.Values)
            {
                if (item.HasNotifications)
                {
                    return true;
                }
            }
            return false;
        }
    }

    /// <summary>True when the subscription wants a Publish request now (data to send or a keep-alive due).</summary>
    public bool IsLate => (PublishingEnabled && HasNotifications) || _needsKeepAlive;

    public bool IsExpired => _lifetimeCounter >= LifetimeCount;

    public uint[] AvailableSequenceNumbers => [.. _retransmission.Select(m => m.SequenceNumber)];

    /// <summary>A Publish request arrived for the session: the client is alive.</summary>
    public void ResetLifetime() => _lifetimeCounter = 0;

    /// <summary>One publishing cycle (the timer fired).</summary>
    public void Tick(DateTime now)
    {
        foreach (var item in Items.Values)
        {
            if (item.Node is ServerVariable { ValueSource: not null } computed && item.AttributeId == NodeAttributes.Value)
            {
                // Computed values (ServerStatus.CurrentTime, State...) have no writer that notifies: sample them here.
                item.OnValueChanged(computed.CurrentValue, now);
            }
            item.FlushPending(now);
        }
        if (PublishingEnabled && HasNotifications)
        {
            if (Session.TryTakePublish(out var publish))
            {
                SendData(publish, now);
                return;
            }
        }
        else
        {
            _keepAliveCounter++;
            if (!_firstMessageSent || _keepAliveCounter >= MaxKeepAliveCount)
            {
                if (Session.TryTakePublish(out var publish))
                {
                    SendKeepAlive(publish, now);
                    return;
                }
                _needsKeepAlive = true;
            }
        }
        if (!Session.HasParkedPublish)
        {
            _lifetimeCounter++;
        }
    }

    /// <summary>Serves a late subscription with a Publish request that just arrived.</summary>
    public void Serve(ParkedPublish publish, DateTime now)
    {
        if (PublishingEnabled && HasNotifications)
        {
            SendData(publish, now);
        }
        else
        {
            SendKeepAlive(publish, now);
        }
    }

    /// <summary>Removes an acknowledged message from the retransmission queue.</summary>
    public StatusCode Acknowledge(uint sequenceNumber)
    {
        for (var node = _retransmission.First; node is not null; node = node.Next)
        {
            if (node.Value.SequenceNumber == sequenceNumber)
            {
                _retransmission.Remove(node);
                return StatusCodes.Good;
            }
        }
        return StatusCodes.BadSequenceNumberUnknown;
    }

    /// <summary>A message still in the retransmission queue, or null (Bad_MessageNotAvailable).</summary>
    public NotificationMessageData? Republish(uint sequenceNumber) =>
        _retransmission.FirstOrDefault(m => m.SequenceNumber == sequenceNumber);

    /// <summary>After a transfer, the client gets the current value of every item again.</summary>
    public void ResendInitialValues(DateTime now)
    {
        foreach (var item in Items.Values)
        {
            if (item.MonitoringMode == 2 && item.Node is ServerVariable variable && item.AttributeId == NodeAttributes.Value)
            {
                item.SampleNow(variable.CurrentValue, now);
            }
        }
    }

    public void Dispose()
    {
        Timer?.Dispose();
        Timer = null;
        foreach (var item in Items.Values)
        {
            (item.Node as ServerVariable)?.RemoveWatcher(item);
        }
        Items.Clear();
    }

    private void SendData(ParkedPublish publish, DateTime now)
    {
        var max = Settings.MaxNotificationsPerPublish == 0 ? int.MaxValue : (int)Settings.MaxNotificationsPerPublish;
        var changes = new List<(uint, DataValue)>();
        foreach (var item in Items.Values)
        {
            if (item.MonitoringMode == 2)
            {
                item.Drain(changes, max - changes.Count);
            }
            if (changes.Count >= max)
            {
                break;
            }
        }
        var message = new NotificationMessageData(NextSequenceNumber(), now, changes, null);
        _retransmission.AddLast(message);
        if (_retransmission.Count > RetransmissionQueueSize)
        {
            _retransmission.RemoveFirst();
        }
        Sent();
        publish.Reply(new PublishAnswer(Id, AvailableSequenceNumbers, HasNotifications, message, publish.AcknowledgementResults));
    }

    private void SendKeepAlive(ParkedPublish publish, DateTime now)
    {
        var message = new NotificationMessageData(_nextSequenceNumber, now, [], null);
        Sent();
        publish.Reply(new PublishAnswer(Id, AvailableSequenceNumbers, false, message, publish.AcknowledgementResults));
    }

    private void Sent()
    {
        _keepAliveCounter = 0;
        _lifetimeCounter = 0;
        _needsKeepAlive = false;
        _firstMessageSent = true;
    }

    private uint NextSequenceNumber()
    {
        var n = _nextSequenceNumber;
        // Sequence numbers skip 0 when they wrap (OPC 10000-4 §7.38, from memory).
        _nextSequenceNumber = n == uint.MaxValue ? 1 : n + 1;
        return n;
    }
}

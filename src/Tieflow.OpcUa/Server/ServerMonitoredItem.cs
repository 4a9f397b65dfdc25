using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// One monitored item of a subscription (OPC 10000-4 §5.12.1): samples its node's value at most once per sampling
/// interval, filters the samples with its DataChangeFilter and queues what is to be reported. Not thread-safe: the
/// server calls it under its lock.
/// </summary>
internal sealed class ServerMonitoredItem
{
    // InfoType DataValue (0x400) and the Overflow bit (0x80), OPC 10000-4 §7.39.
    private const uint OverflowBits = 0x480;

    private readonly Queue<DataValue> _queue = new();
    private DataValue? _lastQueued;
    private DataValue? _pending;
    private DateTime _lastSampleTime = DateTime.MinValue;

    public ServerMonitoredItem(uint id, ServerNode node, uint attributeId, MonitoredItemSettings settings)
    {
        Id = id;
        Node = node;
        AttributeId = attributeId;
        Settings = settings;
    }

    public uint Id { get; }

    public ServerNode Node { get; }

    public uint AttributeId { get; }

    public MonitoredItemSettings Settings { get; private set; }

    /// <summary>0 Disabled, 1 Sampling, 2 Reporting.</summary>
    public int MonitoringMode { get; set; } = 2;

    public bool HasNotifications => MonitoringMode == 2 && _queue.Count > 0;

    public int QueuedCount => _queue.Count;

    public void Modify(MonitoredItemSettings settings)
    {
        Settings = settings;
        while (_queue.Count > (int)settings.QueueSize)
        {
            _queue.Dequeue();
        }
    }

    /// <summary>Takes the first sample (the current value) right after creation.</summary>
    public void SampleNow(DataValue value, DateTime now)
    {
        _pending = null;
        _lastSampleTime = now;
        Enqueue(value, now, force: true);
    }

    /// <summary>A new value of the node: sampled now, or kept until the sampling interval has passed.</summary>
    public void OnValueChanged(DataValue value, DateTime now)
    {
        if (MonitoringMode == 0)
        {
            return;
        }
        if (now - _lastSampleTime >= TimeSpan.FromMilliseconds(Settings.SamplingIntervalMs))
        {
            _pending = null;
            _lastSampleTime = now;
            Enqueue(value, now, force: false);
        }
        else
        {
            _pending = value;
        }
    }

    /// <summary>Samples a value that arrived within the last sampling interval once that interval is over.</summary>
    public void FlushPending(DateTime now)
    {
        if (_pending is { } value && now - _lastSampleTime >= TimeSpan.FromMilliseconds(Settings.SamplingIntervalMs))
        {
            _pending = null;
            _lastSampleTime = now;
            Enqueue(value, now, force: false);
        }
    }

    /// <summary>Moves up to <paramref name="max"/> queued values (oldest first) to <paramref name="target"/>.</summary>
    public void Drain(List<(uint ClientHandle, DataValue Value)> target, int max)
    {
        while (_queue.Count > 0 && max-- > 0)
        {
            target.Add((Settings.ClientHandle, _queue.Dequeue()));
        }
    }

    /// <summary>True when the new sample passes the DataChangeFilter against the last queued one.</summary>
    public bool Passes(DataValue value)
    {
        if (_lastQueued is not { } last)
        {
            return true;
        }
        if (last.Status != value.Status)
        {
            return true;
        }
        var filter = Settings.Filter;
        var trigger = filter?.Trigger ?? 1;
        if (trigger == 0)
        {
            return false;
        }
        if (trigger == 2 && (last.SourceTimestamp != value.SourceTimestamp || last.SourcePicoseconds != value.SourcePicoseconds))
        {
            return true;
        }
        if (filter is { AbsoluteLimit: { } limit } && last.Value.TryGetDouble(out var a) && value.Value.TryGetDouble(out var b))
        {
            return Math.Abs(a - b) > limit;
        }
        return !last.Value.Equals(value.Value);
    }

    private void Enqueue(DataValue value, DateTime now, bool force)
    {
        if (!force && !Passes(value))
        {
            return;
        }
        _lastQueued = value;
        var stamped = NodeAttributes.WithTimestamps(value, Settings.TimestampsToReturn, now, AttributeId == NodeAttributes.Value);
        if (_queue.Count < Settings.QueueSize)
        {
            _queue.Enqueue(stamped);
            return;
        }
        var overflow = Settings.QueueSize > 1;
        if (Settings.DiscardOldest)
        {
            _queue.Dequeue();
            if (overflow && _queue.Count > 0)
            {
                // The oldest value left in the queue carries the overflow bit (OPC 10000-4 §5.12.1.5).
                var oldest = _queue.Dequeue();
                var rest = _queue.ToArray();
                _queue.Clear();
                _queue.Enqueue(WithOverflow(oldest));
                foreach (var v in rest)
                {
                    _queue.Enqueue(v);
                }
            }
            _queue.Enqueue(stamped);
        }
        else
        {
            // The newest value replaces the last one in the queue and carries the overflow bit.
            var kept = _queue.ToArray();
            _queue.Clear();
            for (var i = 0; i < kept.Length - 1; i++)
            {
                _queue.Enqueue(kept[i]);
            }
            _queue.Enqueue(overflow ? WithOverflow(stamped) : stamped);
        }
    }

    private static DataValue WithOverflow(DataValue value) => new()
    {
        Value = value.Value,
        Status = new StatusCode(value.Status.Code | OverflowBits),
        SourceTimestamp = value.SourceTimestamp,
        SourcePicoseconds = value.SourcePicoseconds,
        ServerTimestamp = value.ServerTimestamp,
        ServerPicoseconds = value.ServerPicoseconds,
    };
}

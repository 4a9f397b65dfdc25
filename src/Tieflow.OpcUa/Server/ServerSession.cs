using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// A session (OPC 10000-4 §5.6): its subscriptions, its parked Publish requests (a bounded FIFO) and its browse
/// continuation points. Not thread-safe: called under the server's lock.
/// </summary>
internal sealed class ServerSession
{
    private readonly LinkedList<ParkedPublish> _parked = new();
    private readonly Queue<(uint SubscriptionId, NotificationMessageData Message)> _statusChanges = new();

    public ServerSession(NodeId sessionId, NodeId authenticationToken, string name, double timeoutMs, object channel, DateTime now)
    {
        SessionId = sessionId;
        AuthenticationToken = authenticationToken;
        Name = name;
        TimeoutMs = timeoutMs;
        Channel = channel;
        LastContact = now;
    }

    public NodeId SessionId { get; }

    public NodeId AuthenticationToken { get; }

    public string Name { get; }

    public double TimeoutMs { get; }

    /// <summary>The secure channel the session is bound to (moves on re-activation).</summary>
    public object Channel { get; set; }

    public bool Activated { get; set; }

    public DateTime LastContact { get; set; }

    public byte[] ServerNonce { get; set; } = [];

    /// <summary>The client certificate given in CreateSession (null on an unsecured channel).</summary>
    public byte[]? ClientCertificate { get; init; }

    public int MaxParkedPublish { get; init; } = 20;

    public Dictionary<uint, ServerSubscription> Subscriptions { get; } = [];

    public Dictionary<string, BrowseContinuation> ContinuationPoints { get; } = new(StringComparer.Ordinal);

    public bool HasParkedPublish => _parked.Count > 0;

    public int ParkedCount => _parked.Count;

    public bool TryTakePublish(out ParkedPublish publish)
    {
        if (_parked.First is { } first)
        {
            _parked.RemoveFirst();
            publish = first.Value;
            return true;
        }
        publish = null!;
        return false;
    }

    /// <summary>
    /// A Publish request arrived (acknowledgements already processed): answer it at once when a subscription is late
    /// or has expired, otherwise park it.
    /// </summary>
    public void OnPublish(ParkedPublish publish, DateTime now)
    {
        LastContact = now;
        foreach (var subscription in Subscriptions.Values)
        {
            subscription.ResetLifetime();
        }
        if (_statusChanges.TryDequeue(out var change))
        {
            publish.Reply(new PublishAnswer(change.SubscriptionId, [], false, change.Message, publish.AcknowledgementResults));
            return;
        }
        if (Subscriptions.Count == 0)
        {
            publish.Fail(StatusCodes.BadNoSubscription);
            return;
        }
        ServerSubscription? late = null;
        foreach (var subscription in Subscriptions.Values)
        {
            if (subscription.IsLate && (late is null || subscription.Settings.Priority > late.Settings.Priority))
            {
                late = subscription;
            }
        }
        if (late is not null)
        {
            late.Serve(publish, now);
            return;
        }
        _parked.AddLast(publish);
        if (_parked.Count > MaxParkedPublish && _parked.First is { } oldest)
        {
            _parked.RemoveFirst();
            oldest.Value.Fail(StatusCodes.BadTooManyPublishRequests);
        }
    }

    /// <summary>An expired subscription: its StatusChangeNotification (Bad_Timeout) goes out with the next Publish.</summary>
    public void Expire(ServerSubscription subscription, DateTime now)
    {
        Subscriptions.Remove(subscription.Id);
        subscription.Dispose();
        SendStatusChange(subscription.Id, StatusCodes.BadTimeout, now);
    }

    /// <summary>A subscription moved to another session: this one is told with Good_SubscriptionTransferred.</summary>
    public void NotifyTransferred(uint subscriptionId, DateTime now) =>
        SendStatusChange(subscriptionId, StatusCodes.GoodSubscriptionTransferred, now);

    private void SendStatusChange(uint subscriptionId, StatusCode status, DateTime now)
    {
        var message = new NotificationMessageData(0, now, [], status);
        if (TryTakePublish(out var publish))
        {
            publish.Reply(new PublishAnswer(subscriptionId, [], false, message, publish.AcknowledgementResults));
        }
        else
        {
            _statusChanges.Enqueue((subscriptionId, message));
        }
    }

    /// <summary>Answers parked requests whose TimeoutHint has passed with Bad_Timeout.</summary>
    public void ExpirePublishRequests(DateTime now)
    {
        for (var node = _parked.First; node is not null;)
        {
            var next = node.Next;
            if (node.Value.Deadline <= now)
            {
                _parked.Remove(node);
                node.Value.Fail(StatusCodes.BadTimeout);
            }
            node = next;
        }
    }

    /// <summary>Answers every parked request with <paramref name="status"/> (shutdown, close, channel moved).</summary>
    public void FailParked(StatusCode status, object? onlyChannel = null)
    {
        for (var node = _parked.First; node is not null;)
        {
            var next = node.Next;
            if (onlyChannel is null || ReferenceEquals(node.Value.Channel, onlyChannel))
            {
                _parked.Remove(node);
                node.Value.Fail(status);
            }
            node = next;
        }
    }

    /// <summary>Deletes every subscription (CloseSession with deleteSubscriptions, session timeout).</summary>
    public void DeleteSubscriptions()
    {
        foreach (var subscription in Subscriptions.Values)
        {
            subscription.Dispose();
        }
        Subscriptions.Clear();
    }
}

using Tieflow.OpcUa.Diagnostics;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <content>The publish loop: outstanding Publish requests, acknowledgements, republishing, delivery.</content>
public sealed partial class UaClient
{
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
                var sent = _time.GetTimestamp();
                try
                {
                    response = await channel.SendAsync<PublishResponse>(request, timeout, cancellationToken, completeOnReceiveThread: true).ConfigureAwait(false);
                    UaDiagnostics.PublishLatency.Record(_time.GetElapsedTime(sent).TotalMilliseconds);
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
}

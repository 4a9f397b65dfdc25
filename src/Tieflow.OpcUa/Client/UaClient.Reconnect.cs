using Tieflow.OpcUa.Diagnostics;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <content>Keep-alive watchdog and reconnection: reactivate, transfer or recreate the subscriptions.</content>
public sealed partial class UaClient
{
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
        using var activity = UaDiagnostics.ActivitySource.StartActivity("reconnect");
        while (!_closing.IsCancellationRequested)
        {
            try
            {
                var restored = await EstablishAsync(true, _closing.Token).ConfigureAwait(false);
                await RecoverSubscriptionsAsync(restored, lostAt, _closing.Token).ConfigureAwait(false);
                ReconnectCount++;
                UaDiagnostics.Reconnects.Add(1, new KeyValuePair<string, object?>("security", Security?.ToString()));
                activity?.SetTag("restored", restored);
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
}

using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <content>Subscription and monitored-item services, Publish and Republish (OPC 10000-4 §5.12, §5.13).</content>
internal sealed partial class ServerEngine
{
    private static readonly StatusCode BadMonitoringModeInvalid = new(0x80410000u);

    private CreateSubscriptionResponse CreateSubscription(ServerSession session, CreateSubscriptionRequest request)
    {
        if (session.Subscriptions.Count >= Settings.MaxSubscriptionsPerSession)
        {
            throw new ServiceResultException(StatusCodes.BadTooManySubscriptions, $"the session holds its limit of {Settings.MaxSubscriptionsPerSession} subscriptions");
        }
        var settings = Revise(request.RequestedPublishingInterval, request.RequestedLifetimeCount, request.RequestedMaxKeepAliveCount,
            request.MaxNotificationsPerPublish, request.Priority);
        var id = ++_nextSubscriptionId;
        var subscription = new ServerSubscription(id, session, settings) { PublishingEnabled = request.PublishingEnabled };
        StartTimer(subscription);
        session.Subscriptions.Add(id, subscription);
        _subscriptions.Add(id, subscription);
        return new CreateSubscriptionResponse
        {
            ResponseHeader = Header(request),
            SubscriptionId = id,
            RevisedPublishingInterval = settings.PublishingIntervalMs,
            RevisedLifetimeCount = settings.LifetimeCount,
            RevisedMaxKeepAliveCount = settings.MaxKeepAliveCount,
        };
    }

    private ModifySubscriptionResponse ModifySubscription(ServerSession session, ModifySubscriptionRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        var settings = Revise(request.RequestedPublishingInterval, request.RequestedLifetimeCount, request.RequestedMaxKeepAliveCount,
            request.MaxNotificationsPerPublish, request.Priority);
        subscription.Settings = settings;
        var period = TimeSpan.FromMilliseconds(settings.PublishingIntervalMs);
        subscription.Timer?.Change(period, period);
        return new ModifySubscriptionResponse
        {
            ResponseHeader = Header(request),
            RevisedPublishingInterval = settings.PublishingIntervalMs,
            RevisedLifetimeCount = settings.LifetimeCount,
            RevisedMaxKeepAliveCount = settings.MaxKeepAliveCount,
        };
    }

    private SetPublishingModeResponse SetPublishingMode(ServerSession session, SetPublishingModeRequest request)
    {
        CheckOperationCount(request.SubscriptionIds.Length);
        var results = request.SubscriptionIds.Select(id =>
        {
            if (!session.Subscriptions.TryGetValue(id, out var subscription))
            {
                return StatusCodes.BadSubscriptionIdInvalid;
            }
            subscription.PublishingEnabled = request.PublishingEnabled;
            return StatusCodes.Good;
        }).ToArray();
        return new SetPublishingModeResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private DeleteSubscriptionsResponse DeleteSubscriptions(ServerSession session, DeleteSubscriptionsRequest request)
    {
        CheckOperationCount(request.SubscriptionIds.Length);
        var results = request.SubscriptionIds.Select(id =>
        {
            if (!session.Subscriptions.Remove(id, out var subscription))
            {
                return StatusCodes.BadSubscriptionIdInvalid;
            }
            _subscriptions.Remove(id);
            subscription.Dispose();
            return StatusCodes.Good;
        }).ToArray();
        if (session.Subscriptions.Count == 0)
        {
            session.FailParked(StatusCodes.BadNoSubscription);
        }
        return new DeleteSubscriptionsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private TransferSubscriptionsResponse TransferSubscriptions(ServerSession session, TransferSubscriptionsRequest request)
    {
        CheckOperationCount(request.SubscriptionIds.Length);
        var now = Now;
        var results = request.SubscriptionIds.Select(id =>
        {
            if (!_subscriptions.TryGetValue(id, out var subscription))
            {
                return new TransferResult { StatusCode = StatusCodes.BadSubscriptionIdInvalid };
            }
            if (!ReferenceEquals(subscription.Session, session))
            {
                var old = subscription.Session;
                old.Subscriptions.Remove(id);
                old.NotifyTransferred(id, now);
                subscription.Session = session;
                session.Subscriptions.Add(id, subscription);
            }
            if (request.SendInitialValues)
            {
                subscription.ResendInitialValues(now);
            }
            return new TransferResult { StatusCode = StatusCodes.Good, AvailableSequenceNumbers = subscription.AvailableSequenceNumbers };
        }).ToArray();
        return new TransferSubscriptionsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private CreateMonitoredItemsResponse CreateMonitoredItems(ServerSession session, CreateMonitoredItemsRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        CheckTimestamps(request.TimestampsToReturn);
        CheckOperationCount(request.ItemsToCreate.Length);
        var now = Now;
        var results = new MonitoredItemCreateResult[request.ItemsToCreate.Length];
        for (var i = 0; i < results.Length; i++)
        {
            results[i] = CreateItem(subscription, request.ItemsToCreate[i], (int)request.TimestampsToReturn, now);
        }
        return new CreateMonitoredItemsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private MonitoredItemCreateResult CreateItem(ServerSubscription subscription, MonitoredItemCreateRequest create, int timestamps, DateTime now)
    {
        var target = create.ItemToMonitor;
        if (!AddressSpace.TryGet(target.NodeId, out var node))
        {
            return new MonitoredItemCreateResult { StatusCode = StatusCodes.BadNodeIdUnknown };
        }
        var current = NodeAttributes.Read(node, target.AttributeId);
        if (current.Status.Is(StatusCodes.BadAttributeIdInvalid))
        {
            return new MonitoredItemCreateResult { StatusCode = StatusCodes.BadAttributeIdInvalid };
        }
        if ((int)create.MonitoringMode is < 0 or > 2)
        {
            return new MonitoredItemCreateResult { StatusCode = BadMonitoringModeInvalid };
        }
        var (status, settings) = ReviseItem(subscription, node, target.AttributeId, create.RequestedParameters, timestamps);
        if (status.IsBad)
        {
            return new MonitoredItemCreateResult { StatusCode = status };
        }
        var item = new ServerMonitoredItem(++_nextMonitoredItemId, node, target.AttributeId, settings!)
        {
            MonitoringMode = (int)create.MonitoringMode,
        };
        subscription.Items.Add(item.Id, item);
        if (node is ServerVariable variable && target.AttributeId == NodeAttributes.Value)
        {
            variable.AddWatcher(item);
        }
        if (item.MonitoringMode != 0)
        {
            // The first notification is the current value (OPC 10000-4 §5.12.1.2).
            item.SampleNow(current, now);
        }
        return new MonitoredItemCreateResult
        {
            StatusCode = StatusCodes.Good,
            MonitoredItemId = item.Id,
            RevisedSamplingInterval = settings!.SamplingIntervalMs,
            RevisedQueueSize = settings.QueueSize,
            FilterResult = ExtensionObject.Null,
        };
    }

    private ModifyMonitoredItemsResponse ModifyMonitoredItems(ServerSession session, ModifyMonitoredItemsRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        CheckTimestamps(request.TimestampsToReturn);
        CheckOperationCount(request.ItemsToModify.Length);
        var results = new MonitoredItemModifyResult[request.ItemsToModify.Length];
        for (var i = 0; i < results.Length; i++)
        {
            var modify = request.ItemsToModify[i];
            if (!subscription.Items.TryGetValue(modify.MonitoredItemId, out var item))
            {
                results[i] = new MonitoredItemModifyResult { StatusCode = StatusCodes.BadMonitoredItemIdInvalid };
                continue;
            }
            var (status, settings) = ReviseItem(subscription, item.Node, item.AttributeId, modify.RequestedParameters, (int)request.TimestampsToReturn);
            if (status.IsBad)
            {
                results[i] = new MonitoredItemModifyResult { StatusCode = status };
                continue;
            }
            item.Modify(settings!);
            results[i] = new MonitoredItemModifyResult
            {
                StatusCode = StatusCodes.Good,
                RevisedSamplingInterval = settings!.SamplingIntervalMs,
                RevisedQueueSize = settings.QueueSize,
                FilterResult = ExtensionObject.Null,
            };
        }
        return new ModifyMonitoredItemsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private SetMonitoringModeResponse SetMonitoringMode(ServerSession session, SetMonitoringModeRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        if ((int)request.MonitoringMode is < 0 or > 2)
        {
            throw new ServiceResultException(BadMonitoringModeInvalid, $"monitoring mode {(int)request.MonitoringMode} is not 0-2");
        }
        CheckOperationCount(request.MonitoredItemIds.Length);
        var now = Now;
        var results = request.MonitoredItemIds.Select(id =>
        {
            if (!subscription.Items.TryGetValue(id, out var item))
            {
                return StatusCodes.BadMonitoredItemIdInvalid;
            }
            var wasDisabled = item.MonitoringMode == 0;
            item.MonitoringMode = (int)request.MonitoringMode;
            if (wasDisabled && item.MonitoringMode != 0)
            {
                item.SampleNow(NodeAttributes.Read(item.Node, item.AttributeId), now);
            }
            return StatusCodes.Good;
        }).ToArray();
        return new SetMonitoringModeResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private DeleteMonitoredItemsResponse DeleteMonitoredItems(ServerSession session, DeleteMonitoredItemsRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        CheckOperationCount(request.MonitoredItemIds.Length);
        var results = request.MonitoredItemIds.Select(id =>
        {
            if (!subscription.Items.Remove(id, out var item))
            {
                return StatusCodes.BadMonitoredItemIdInvalid;
            }
            (item.Node as ServerVariable)?.RemoveWatcher(item);
            return StatusCodes.Good;
        }).ToArray();
        return new DeleteMonitoredItemsResponse { ResponseHeader = Header(request), Results = results, DiagnosticInfos = [] };
    }

    private PublishResponse? Publish(ServerConnection connection, uint requestId, ServerSession session, PublishRequest request)
    {
        var acknowledgements = request.SubscriptionAcknowledgements;
        if (acknowledgements.Length > MaxOperationsPerCall)
        {
            throw new ServiceResultException(StatusCodes.BadTooManyOperations, $"{acknowledgements.Length} acknowledgements exceed {MaxOperationsPerCall}");
        }
        var results = acknowledgements.Select(a =>
            session.Subscriptions.TryGetValue(a.SubscriptionId, out var s) ? s.Acknowledge(a.SequenceNumber) : StatusCodes.BadSubscriptionIdInvalid).ToArray();
        var now = Now;
        var hint = request.RequestHeader.TimeoutHint;
        var deadline = hint == 0 ? DateTime.MaxValue : now.AddMilliseconds(hint);
        var requestHandle = request.RequestHeader.RequestHandle;
        var parked = new ParkedPublish(connection, deadline, results, (answer, status) =>
        {
            IServiceResponse response = answer is null
                ? new ServiceFault { ResponseHeader = new ResponseHeader { Timestamp = Now, RequestHandle = requestHandle, ServiceResult = status } }
                : ToPublishResponse(answer, requestHandle);
            connection.SendResponse(requestId, response);
        });
        session.OnPublish(parked, now);
        return null;
    }

    private RepublishResponse Republish(ServerSession session, RepublishRequest request)
    {
        var subscription = Find(session, request.SubscriptionId);
        var message = subscription.Republish(request.RetransmitSequenceNumber)
            ?? throw new ServiceResultException(StatusCodes.BadMessageNotAvailable, $"message {request.RetransmitSequenceNumber} is not in the retransmission queue");
        return new RepublishResponse { ResponseHeader = Header(request), NotificationMessage = ToNotificationMessage(message) };
    }

    private PublishResponse ToPublishResponse(PublishAnswer answer, uint requestHandle) => new()
    {
        ResponseHeader = new ResponseHeader { Timestamp = Now, RequestHandle = requestHandle, ServiceResult = StatusCodes.Good },
        SubscriptionId = answer.SubscriptionId,
        AvailableSequenceNumbers = answer.AvailableSequenceNumbers,
        MoreNotifications = answer.MoreNotifications,
        NotificationMessage = ToNotificationMessage(answer.Message),
        Results = answer.AcknowledgementResults,
        DiagnosticInfos = [],
    };

    private static NotificationMessage ToNotificationMessage(NotificationMessageData message)
    {
        ExtensionObject[] data;
        if (message.StatusChange is { } status)
        {
            data = [new ExtensionObject(new NodeId(StatusChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new StatusChangeNotification { Status = status })];
        }
        else if (message.DataChanges.Count > 0)
        {
            var notification = new DataChangeNotification
            {
                MonitoredItems = [.. message.DataChanges.Select(c => new MonitoredItemNotification { ClientHandle = c.ClientHandle, Value = c.Value })],
                DiagnosticInfos = [],
            };
            data = [new ExtensionObject(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, notification)];
        }
        else
        {
            data = [];
        }
        return new NotificationMessage { SequenceNumber = message.SequenceNumber, PublishTime = message.PublishTime, NotificationData = data };
    }

    private void StartTimer(ServerSubscription subscription)
    {
        var period = TimeSpan.FromMilliseconds(subscription.Settings.PublishingIntervalMs);
        subscription.Timer = _time.CreateTimer(_ => OnPublishingTimer(subscription), null, period, period);
    }

    private void OnPublishingTimer(ServerSubscription subscription)
    {
        lock (_sync)
        {
            if (!_subscriptions.ContainsKey(subscription.Id) || _state == ServerState.Shutdown)
            {
                return;
            }
            var now = Now;
            subscription.Tick(now);
            if (subscription.IsExpired)
            {
                _subscriptions.Remove(subscription.Id);
                subscription.Session.Expire(subscription, now);
            }
        }
    }

    private ServerSubscription Find(ServerSession session, uint subscriptionId) =>
        session.Subscriptions.TryGetValue(subscriptionId, out var subscription)
            ? subscription
            : throw new ServiceResultException(StatusCodes.BadSubscriptionIdInvalid, $"subscription {subscriptionId} does not belong to this session");

    private static void CheckTimestamps(TimestampsToReturn value)
    {
        if ((int)value is < 0 or > 3)
        {
            throw new ServiceResultException(BadTimestampsToReturnInvalid, $"timestampsToReturn {(int)value} is not 0-3");
        }
    }

    private ServerSubscriptionSettings Revise(double interval, uint lifetime, uint keepAlive, uint maxNotifications, byte priority)
    {
        var revisedInterval = double.IsFinite(interval) && interval > Settings.MinPublishingIntervalMs
            ? Math.Min(interval, 3_600_000)
            : Settings.MinPublishingIntervalMs;
        var revisedKeepAlive = keepAlive == 0 ? 10u : Math.Clamp(keepAlive, 1u, 12_000u);
        // The lifetime is at least three keep-alive periods (OPC 10000-4 §5.13.2.2).
        var revisedLifetime = Math.Clamp(lifetime, 3 * revisedKeepAlive, 300_000u);
        return new ServerSubscriptionSettings(revisedInterval, revisedLifetime, revisedKeepAlive, maxNotifications, priority);
    }

    private (StatusCode Status, MonitoredItemSettings? Settings) ReviseItem(
        ServerSubscription subscription, ServerNode node, uint attributeId, MonitoringParameters parameters, int timestamps)
    {
        var (filterStatus, filter) = ValidateFilter(node, attributeId, parameters.Filter);
        if (filterStatus.IsBad)
        {
            return (filterStatus, null);
        }
        var minimum = Math.Max(Settings.MinSamplingIntervalMs, (node as ServerVariable)?.MinimumSamplingIntervalMs ?? 0);
        var requested = parameters.SamplingInterval;
        var sampling = double.IsNaN(requested) || requested < 0 ? subscription.Settings.PublishingIntervalMs : requested;
        sampling = Math.Min(Math.Max(sampling, minimum), 3_600_000);
        var queue = Math.Clamp(parameters.QueueSize, 1u, Settings.MaxQueueSize);
        return (StatusCodes.Good, new MonitoredItemSettings(parameters.ClientHandle, sampling, queue, parameters.DiscardOldest, timestamps, filter));
    }

    /// <summary>Checks a monitoring filter against the node (docs/opcua.md §1.10 for the per-item errors node-opcua gives).</summary>
    private static (StatusCode Status, DataChangeSettings? Filter) ValidateFilter(ServerNode node, uint attributeId, ExtensionObject filter)
    {
        if (filter.IsNull || (filter.Body is null && filter.TypeId.IsNull))
        {
            return (StatusCodes.Good, null);
        }
        if (filter.Body is not DataChangeFilter dataChange)
        {
            return (StatusCodes.BadMonitoredItemFilterUnsupported, null);
        }
        if (attributeId != NodeAttributes.Value || node is not ServerVariable variable)
        {
            return (StatusCodes.BadFilterNotAllowed, null);
        }
        if ((int)dataChange.Trigger is < 0 or > 2)
        {
            return (StatusCodes.BadMonitoredItemFilterInvalid, null);
        }
        var trigger = (int)dataChange.Trigger;
        switch (dataChange.DeadbandType)
        {
            case 0:
                return (StatusCodes.Good, new DataChangeSettings(trigger, 0, 0, null));
            case 1:
                if (!variable.IsNumeric)
                {
                    return (StatusCodes.BadFilterNotAllowed, null);
                }
                if (!(dataChange.DeadbandValue >= 0) || !double.IsFinite(dataChange.DeadbandValue))
                {
                    return (StatusCodes.BadDeadbandFilterInvalid, null);
                }
                return (StatusCodes.Good, new DataChangeSettings(trigger, 1, dataChange.DeadbandValue, dataChange.DeadbandValue));
            case 2:
                if (!variable.IsNumeric)
                {
                    return (StatusCodes.BadFilterNotAllowed, null);
                }
                if (variable.EngineeringUnitsRange is not { } range)
                {
                    return (StatusCodes.BadMonitoredItemFilterUnsupported, null);
                }
                if (!(dataChange.DeadbandValue is >= 0 and <= 100))
                {
                    return (StatusCodes.BadDeadbandFilterInvalid, null);
                }
                // Percent deadband: a fraction of the EURange span (OPC 10000-8 §6.2).
                var limit = dataChange.DeadbandValue / 100 * (range.High - range.Low);
                return (StatusCodes.Good, new DataChangeSettings(trigger, 2, dataChange.DeadbandValue, limit));
            default:
                return (StatusCodes.BadDeadbandFilterInvalid, null);
        }
    }
}

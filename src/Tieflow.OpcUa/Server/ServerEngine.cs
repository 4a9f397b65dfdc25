using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// The services of the server (docs/opcua.md §2.1) over one address space. Every request is handled under one
/// lock, so the address space, the sessions and the subscriptions need no locking of their own; responses are queued
/// on the connections, never written while the lock is held.
/// </summary>
internal sealed partial class ServerEngine : IDisposable
{
    private const int MaxOperationsPerCall = 1000;

    private readonly Lock _sync = new();
    private readonly TimeProvider _time;
    private readonly Dictionary<NodeId, ServerSession> _sessionsByToken = [];
    private readonly Dictionary<uint, ServerSubscription> _subscriptions = [];
    private readonly HashSet<ServerConnection> _connections = [];
    private ITimer? _housekeeping;
    private uint _nextChannelId;
    private uint _nextSubscriptionId;
    private uint _nextMonitoredItemId;
    private ServerState _state = ServerState.Running;

    public ServerEngine(ServerEngineSettings settings, TimeProvider time)
    {
        Settings = settings;
        _time = time;
        StartTime = Now;
        AddressSpace = new AddressSpace();
        StandardNodes.Build(this);
    }

    public ServerEngineSettings Settings { get; }

    public AddressSpace AddressSpace { get; }

    public DateTime StartTime { get; }

    public DateTime Now => _time.GetUtcNow().UtcDateTime;

    /// <summary>The server's clock (token lifetimes of the connections).</summary>
    public TimeProvider Time => _time;

    public ServerState State
    {
        get
        {
            lock (_sync)
            {
                return _state;
            }
        }
    }

    /// <summary>The state without taking the lock (for value sources that already run under it).</summary>
    public ServerState StateUnlocked => _state;

    /// <summary>The port clients connect to, once listening (used to build endpoint URLs).</summary>
    public int Port { get; set; }

    public int SessionCount
    {
        get
        {
            lock (_sync)
            {
                return _sessionsByToken.Count;
            }
        }
    }

    public int ConnectionCount
    {
        get
        {
            lock (_sync)
            {
                return _connections.Count;
            }
        }
    }

    public int ParkedPublishCount
    {
        get
        {
            lock (_sync)
            {
                return _sessionsByToken.Values.Sum(s => s.ParkedCount);
            }
        }
    }

    /// <summary>Runs <paramref name="action"/> under the server's lock (address-space changes, value updates).</summary>
    public void Locked(Action action)
    {
        lock (_sync)
        {
            action();
        }
    }

    /// <summary>Runs <paramref name="func"/> under the server's lock.</summary>
    public T Locked<T>(Func<T> func)
    {
        lock (_sync)
        {
            return func();
        }
    }

    public void Start()
    {
        _housekeeping = _time.CreateTimer(_ => Housekeeping(), null, TimeSpan.FromMilliseconds(100), TimeSpan.FromMilliseconds(100));
    }

    public uint NextChannelId() => Interlocked.Increment(ref _nextChannelId);

    public void OnConnectionOpened(ServerConnection connection)
    {
        lock (_sync)
        {
            _connections.Add(connection);
        }
    }

    public void OnConnectionClosed(ServerConnection connection)
    {
        lock (_sync)
        {
            _connections.Remove(connection);
            List<ServerSession>? abandoned = null;
            foreach (var session in _sessionsByToken.Values)
            {
                if (!ReferenceEquals(session.Channel, connection))
                {
                    continue;
                }
                if (!session.Activated)
                {
                    // Never activated: it cannot be resumed, and keeping it would let dropped connections use up the
                    // session limit.
                    (abandoned ??= []).Add(session);
                    continue;
                }
                // The channel is gone: its parked requests cannot be answered any more. The session waits for
                // re-activation on a new channel until it times out.
                session.FailParked(StatusCodes.BadSecureChannelClosed, connection);
            }
            foreach (var session in abandoned ?? [])
            {
                RemoveSession(session, StatusCodes.BadSessionClosed);
            }
        }
    }

    /// <summary>
    /// Shutdown (docs/opcua.md §2.4): ServerStatus.State becomes Shutdown, parked Publish requests are answered with
    /// Bad_SessionClosed, then the connections are closed once their queued messages are written.
    /// </summary>
    public List<ServerConnection> BeginShutdown()
    {
        lock (_sync)
        {
            _state = ServerState.Shutdown;
            foreach (var session in _sessionsByToken.Values)
            {
                session.FailParked(StatusCodes.BadSessionClosed);
            }
            return [.. _connections];
        }
    }

    public void Dispose()
    {
        lock (_sync)
        {
            _housekeeping?.Dispose();
            _housekeeping = null;
            foreach (var subscription in _subscriptions.Values)
            {
                subscription.Dispose();
            }
            _subscriptions.Clear();
            _sessionsByToken.Clear();
        }
    }

    /// <summary>Handles one decoded request from a connection.</summary>
    public void Handle(ServerConnection connection, uint requestId, IServiceRequest request)
    {
        IServiceResponse? response;
        lock (_sync)
        {
            try
            {
                response = Dispatch(connection, requestId, request);
            }
            catch (ServiceResultException e)
            {
                response = Fault(request, e.Status);
            }
        }
        if (response is not null)
        {
            connection.SendResponse(requestId, response);
        }
    }

    private IServiceResponse? Dispatch(ServerConnection connection, uint requestId, IServiceRequest request)
    {
        if (_state == ServerState.Shutdown)
        {
            return Fault(request, StatusCodes.BadShutdown);
        }
        switch (request)
        {
            case GetEndpointsRequest r:
                return new GetEndpointsResponse { ResponseHeader = Header(r), Endpoints = Endpoints(r.EndpointUrl ?? connection.HelloEndpointUrl) };
            case FindServersRequest r:
                return new FindServersResponse { ResponseHeader = Header(r), Servers = [ApplicationDescription(r.EndpointUrl ?? connection.HelloEndpointUrl)] };
            case CreateSessionRequest r:
                return CreateSession(connection, r);
            case ActivateSessionRequest r:
                return ActivateSession(connection, r);
            case CloseSessionRequest r:
                return CloseSession(connection, r);
            case CancelRequest r:
                ValidateSession(connection, r);
                return new CancelResponse { ResponseHeader = Header(r), CancelCount = 0 };
            default:
                break;
        }
        var session = ValidateSession(connection, request);
        return request switch
        {
            BrowseRequest r => Browse(session, r),
            BrowseNextRequest r => BrowseNext(session, r),
            TranslateBrowsePathsToNodeIdsRequest r => Translate(r),
            RegisterNodesRequest r => new RegisterNodesResponse { ResponseHeader = Header(r), RegisteredNodeIds = r.NodesToRegister },
            UnregisterNodesRequest r => new UnregisterNodesResponse { ResponseHeader = Header(r) },
            ReadRequest r => Read(r),
            CreateSubscriptionRequest r => CreateSubscription(session, r),
            ModifySubscriptionRequest r => ModifySubscription(session, r),
            SetPublishingModeRequest r => SetPublishingMode(session, r),
            DeleteSubscriptionsRequest r => DeleteSubscriptions(session, r),
            TransferSubscriptionsRequest r => TransferSubscriptions(session, r),
            CreateMonitoredItemsRequest r => CreateMonitoredItems(session, r),
            ModifyMonitoredItemsRequest r => ModifyMonitoredItems(session, r),
            SetMonitoringModeRequest r => SetMonitoringMode(session, r),
            DeleteMonitoredItemsRequest r => DeleteMonitoredItems(session, r),
            PublishRequest r => Publish(connection, requestId, session, r),
            RepublishRequest r => Republish(session, r),
            _ => Fault(request, StatusCodes.BadServiceUnsupported),
        };
    }

    private ResponseHeader Header(IServiceRequest request, StatusCode? result = null) => new()
    {
        Timestamp = Now,
        RequestHandle = request.RequestHeader.RequestHandle,
        ServiceResult = result ?? StatusCodes.Good,
    };

    private ServiceFault Fault(IServiceRequest request, StatusCode status) => new() { ResponseHeader = Header(request, status) };

    private static void CheckOperationCount(int count)
    {
        if (count == 0)
        {
            throw new ServiceResultException(StatusCodes.BadNothingToDo, "the request holds no operation");
        }
        if (count > MaxOperationsPerCall)
        {
            throw new ServiceResultException(StatusCodes.BadTooManyOperations, $"{count} operations exceed the limit of {MaxOperationsPerCall} per call");
        }
    }

    private void Housekeeping()
    {
        List<ServerConnection> connections;
        lock (_sync)
        {
            var now = Now;
            List<ServerSession>? expired = null;
            foreach (var session in _sessionsByToken.Values)
            {
                session.ExpirePublishRequests(now);
                if (!session.HasParkedPublish && (now - session.LastContact).TotalMilliseconds > session.TimeoutMs)
                {
                    (expired ??= []).Add(session);
                }
            }
            foreach (var session in expired ?? [])
            {
                RemoveSession(session, StatusCodes.BadSessionClosed);
            }
            connections = [.. _connections];
        }
        foreach (var connection in connections)
        {
            connection.CheckExpiry();
        }
    }

    private void RemoveSession(ServerSession session, StatusCode parkedStatus)
    {
        foreach (var id in session.Subscriptions.Keys)
        {
            _subscriptions.Remove(id);
        }
        session.DeleteSubscriptions();
        session.FailParked(parkedStatus);
        _sessionsByToken.Remove(session.AuthenticationToken);
    }
}

using System.Collections.Concurrent;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Fakes;

/// <summary>
/// A scripted session peer on <see cref="LoopbackServer"/> for client tests that need exact control of Publish
/// responses (sequence numbers, silence). Answers GetEndpoints, CreateSession, ActivateSession, Read of the
/// NamespaceArray, CreateSubscription and CreateMonitoredItems; parks every Publish until the test answers it.
/// </summary>
internal sealed class ScriptedSessionServer : IAsyncDisposable
{
    private readonly ConcurrentQueue<(PublishRequest Request, Func<IServiceResponse, Task> Reply)> _parked = new();

    public ScriptedSessionServer()
    {
        Server = new LoopbackServer { DeferringHandler = Handle };
    }

    public LoopbackServer Server { get; }

    public UserTokenPolicy[] TokenPolicies { get; set; } = [new UserTokenPolicy { PolicyId = "anon", TokenType = UserTokenType.Anonymous }];

    public Func<RepublishRequest, IServiceResponse> Republish { get; set; } =
        _ => new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadMessageNotAvailable } };

    private readonly List<uint> _acknowledged = [];

    public IReadOnlyList<uint> Acknowledged
    {
        get
        {
            lock (_acknowledged)
            {
                return [.. _acknowledged];
            }
        }
    }

    public string[] NamespaceArray { get; set; } = ["http://opcfoundation.org/UA/", "urn:test:server", "urn:test:plant"];

    private byte _generation = 1;

    /// <summary>Forgets every session (as a restarted server does) and drops the connections.</summary>
    public void Restart()
    {
        _generation++;
        while (_parked.TryDequeue(out _))
        {
        }

        Server.DropConnections();
    }

    public int ParkedCount => _parked.Count;

    public static ExtensionObject DataChange(uint clientHandle, double value) =>
        new(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeNotification
        {
            MonitoredItems = [new MonitoredItemNotification { ClientHandle = clientHandle, Value = new DataValue { Value = Variant.From(value) } }],
        });

    /// <summary>Answers the oldest parked Publish with a notification message (no data = keep-alive).</summary>
    public async Task AnswerPublishAsync(uint sequenceNumber, params ExtensionObject[] data)
    {
        for (var i = 0; i < 500 && _parked.IsEmpty; i++)
        {
            await Task.Delay(10);
        }

        if (!_parked.TryDequeue(out var parked))
        {
            throw new InvalidOperationException("No Publish request is parked");
        }

        await parked.Reply(new PublishResponse
        {
            SubscriptionId = 1,
            NotificationMessage = new NotificationMessage { SequenceNumber = sequenceNumber, NotificationData = data },
        });
    }

    private IServiceResponse? Handle(IServiceRequest request, Func<IServiceResponse, Task> reply)
    {
        switch (request)
        {
            case GetEndpointsRequest:
                return new GetEndpointsResponse
                {
                    Endpoints =
                    [
                        new EndpointDescription
                        {
                            EndpointUrl = Server.Url.ToString(), SecurityMode = MessageSecurityMode.None, SecurityPolicyUri = SecureChannelCodec.SecurityPolicyNoneUri,
                            UserIdentityTokens = TokenPolicies,
                        },
                    ],
                };
            case CreateSessionRequest:
                return new CreateSessionResponse { SessionId = new NodeId(1u, 1), AuthenticationToken = new NodeId([1, 2, 3, _generation], 0), RevisedSessionTimeout = 60000, ServerNonce = new byte[32] };
            case ActivateSessionRequest activate:
                return activate.RequestHeader.AuthenticationToken == new NodeId([1, 2, 3, _generation], 0)
                    ? new ActivateSessionResponse { ServerNonce = new byte[32] }
                    : new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadSessionIdInvalid } };
            case TransferSubscriptionsRequest transfer:
                return new TransferSubscriptionsResponse
                {
                    Results = transfer.SubscriptionIds.Select(_ => new TransferResult { StatusCode = StatusCodes.BadSubscriptionIdInvalid }).ToArray(),
                };
            case ReadRequest read:
                return new ReadResponse
                {
                    Results = read.NodesToRead.Select(n => n.NodeId == new NodeId(2255u)
                        ? new DataValue { Value = Variant.From(NamespaceArray) }
                        : new DataValue { Value = Variant.From(1.0) }).ToArray(),
                };
            case CreateSubscriptionRequest create:
                return new CreateSubscriptionResponse
                {
                    SubscriptionId = 1, RevisedPublishingInterval = create.RequestedPublishingInterval, RevisedLifetimeCount = create.RequestedLifetimeCount,
                    RevisedMaxKeepAliveCount = create.RequestedMaxKeepAliveCount,
                };
            case CreateMonitoredItemsRequest items:
                return new CreateMonitoredItemsResponse
                {
                    Results = items.ItemsToCreate.Select((item, i) => new MonitoredItemCreateResult
                    {
                        MonitoredItemId = (uint)i + 1, RevisedSamplingInterval = 100, RevisedQueueSize = item.RequestedParameters.QueueSize,
                    }).ToArray(),
                };
            case PublishRequest publish:
                lock (_acknowledged)
                {
                    _acknowledged.AddRange(publish.SubscriptionAcknowledgements.Select(a => a.SequenceNumber));
                }

                _parked.Enqueue((publish, reply));
                return null;
            case RepublishRequest republish:
                return Republish(republish);
            case CloseSessionRequest:
                return new CloseSessionResponse();
            case DeleteSubscriptionsRequest:
                return new DeleteSubscriptionsResponse { Results = [StatusCodes.Good] };
            default:
                return new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadServiceUnsupported } };
        }
    }

    public ValueTask DisposeAsync() => Server.DisposeAsync();
}

using BenchmarkDotNet.Attributes;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Bench.OpcUa;

/// <summary>
/// Decoding of Publish responses carrying data-change notifications (target: at least 500 000 notifications per
/// second on one core). Each operation is one notification: the reported mean is the time per notification.
/// </summary>
[MemoryDiagnoser]
public class PublishDecodeBenchmarks
{
    private byte[] _message = [];

    /// <summary>Notifications per Publish response (the benchmark reports the time per notification).</summary>
    [Params(50, 1000)]
    public int NotificationsPerResponse { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var t0 = new DateTime(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);
        var items = new MonitoredItemNotification[NotificationsPerResponse];
        for (var i = 0; i < items.Length; i++)
        {
            items[i] = new MonitoredItemNotification
            {
                ClientHandle = (uint)i + 1,
                Value = new DataValue
                {
                    Value = Variant.From(20.0 + (i * 0.01)),
                    Status = i % 10 == 0 ? StatusCodes.UncertainLastUsableValue : StatusCodes.Good,
                    SourceTimestamp = t0.AddMilliseconds(i),
                    ServerTimestamp = t0.AddMilliseconds(i + 1),
                },
            };
        }

        var response = new PublishResponse
        {
            SubscriptionId = 1,
            AvailableSequenceNumbers = [7],
            NotificationMessage = new NotificationMessage
            {
                SequenceNumber = 7,
                PublishTime = t0,
                NotificationData = [new ExtensionObject(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeNotification { MonitoredItems = items })],
            },
        };
        _message = MessageCodec.Encode(response);
    }

    /// <summary>Decodes 1000 notifications' worth of responses per invocation, so that the mean is per notification.</summary>
    [Benchmark(OperationsPerInvoke = 1000)]
    public int DecodePublishResponse()
    {
        var total = 0;
        for (var i = 0; i < 1000 / NotificationsPerResponse; i++)
        {
            var response = (PublishResponse)MessageCodec.Decode(_message);
            total += ((DataChangeNotification)response.NotificationMessage.NotificationData[0].Body!).MonitoredItems.Length;
        }

        return total;
    }
}

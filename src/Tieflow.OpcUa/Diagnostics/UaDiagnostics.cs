using System.Diagnostics;
using System.Diagnostics.Metrics;
using System.Runtime.CompilerServices;
using Tieflow.OpcUa.Client;

namespace Tieflow.OpcUa.Diagnostics;

/// <summary>
/// The client's metrics and traces through the base library, for the service to export: meter and activity source
/// <see cref="Name"/> (<c>Tieflow.OpcUa</c>). Instruments: <c>tieflow.opcua.client.connects</c> and
/// <c>.reconnects</c> (counters, tag <c>security</c>), <c>.connect.duration</c> (ms), <c>.publish.latency</c> (ms,
/// Publish request to response), <c>.notifications</c> and <c>.notifications.dropped</c> (counters),
/// <c>.queue.depth</c> (events waiting per subscription, gauge). Activities: <c>connect</c>, <c>reconnect</c>.
/// </summary>
public static class UaDiagnostics
{
    /// <summary>The meter and activity source name.</summary>
    public const string Name = "Tieflow.OpcUa";

    private static readonly ConditionalWeakTable<UaSubscription, object> Subscriptions = [];

    internal static Meter Meter { get; } = new(Name);

    internal static ActivitySource ActivitySource { get; } = new(Name);

    internal static Counter<long> Connects { get; } = Meter.CreateCounter<long>("tieflow.opcua.client.connects", description: "Successful connects (channel and session)");

    internal static Counter<long> Reconnects { get; } = Meter.CreateCounter<long>("tieflow.opcua.client.reconnects", description: "Connections re-established after a loss");

    internal static Histogram<double> ConnectDuration { get; } = Meter.CreateHistogram<double>("tieflow.opcua.client.connect.duration", "ms", "Time of a whole connect");

    internal static Histogram<double> PublishLatency { get; } = Meter.CreateHistogram<double>("tieflow.opcua.client.publish.latency", "ms", "Publish request to response");

    internal static Counter<long> Notifications { get; } = Meter.CreateCounter<long>("tieflow.opcua.client.notifications", description: "Data changes received");

    internal static Counter<long> Dropped { get; } = Meter.CreateCounter<long>("tieflow.opcua.client.notifications.dropped", description: "Data changes dropped because the reader fell behind");

    static UaDiagnostics() => Meter.CreateObservableGauge("tieflow.opcua.client.queue.depth", QueueDepths, description: "Events waiting on a subscription");

    internal static void Track(UaSubscription subscription) => Subscriptions.AddOrUpdate(subscription, subscription);

    private static IEnumerable<Measurement<int>> QueueDepths()
    {
        foreach (var (subscription, _) in Subscriptions)
        {
            yield return new Measurement<int>(subscription.Events.Count, new KeyValuePair<string, object?>("subscription", subscription.SubscriptionId));
        }
    }
}

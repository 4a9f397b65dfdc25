using System.Diagnostics.Metrics;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Diagnostics;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;
using SubscriptionSettings = Tieflow.OpcUa.Client.SubscriptionSettings;

namespace Tieflow.OpcUa.Tests.Client;

/// <summary>The client's metrics reach a listener of the <c>Tieflow.OpcUa</c> meter (other tests may add to the same instruments).</summary>
public sealed class UaDiagnosticsTests
{
    [Fact]
    public async Task ConnectAndNotifications_AreMeasured()
    {
        var seen = new Dictionary<string, double>();
        using var listener = new MeterListener();
        listener.InstrumentPublished = (instrument, l) =>
        {
            if (instrument.Meter.Name == UaDiagnostics.Name)
            {
                l.EnableMeasurementEvents(instrument);
            }
        };
        void Record(Instrument instrument, double value)
        {
            lock (seen)
            {
                seen[instrument.Name] = seen.GetValueOrDefault(instrument.Name) + value;
            }
        }
        listener.SetMeasurementEventCallback<long>((i, v, _, _) => Record(i, v));
        listener.SetMeasurementEventCallback<double>((i, v, _, _) => Record(i, v));
        listener.SetMeasurementEventCallback<int>((i, v, _, _) => Record(i, v));
        listener.Start();

        await using var server = new UaServer(new UaServerOptions { ResourcePath = "/sim" });
        var flow = server.AddVariable(server.AddFolder(UaServer.ObjectsFolder, "Plant"), "Flow", Variant.From(1.0));
        await server.StartAsync();
        await using var client = new UaClient(new UaClientOptions { EndpointUrl = new Uri(server.EndpointUrl) });
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100) },
            [new MonitoredNode { Node = flow, Key = "flow" }]);
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        await subscription.Events.ReadAsync(cts.Token);
        listener.RecordObservableInstruments();

        lock (seen)
        {
            Assert.True(seen.GetValueOrDefault("tieflow.opcua.client.connects") >= 1);
            Assert.True(seen.ContainsKey("tieflow.opcua.client.connect.duration"));
            Assert.True(seen.GetValueOrDefault("tieflow.opcua.client.notifications") >= 1);
            Assert.True(seen.ContainsKey("tieflow.opcua.client.publish.latency"));
            Assert.True(seen.ContainsKey("tieflow.opcua.client.queue.depth"));
        }
    }
}

using Microsoft.Extensions.Diagnostics.HealthChecks;
using Tieflow.Service.Health;
using Tieflow.Service.Monitor;
using Tieflow.Service.Sources;
using Tieflow.Service.Store;
using Tieflow.Storage.Outbox;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>The reasons /health gives: source disconnected, store behind, outbox filling, monitor failed.</summary>
public sealed class MonitorHealthCheckTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    private static StatusSnapshot Running(StoreState? store = null, SourceState source = SourceState.Connected) =>
        new("Brackenmoor", "running", T0, [new SourceStatus("opcua", true, source, T0, source == SourceState.Disconnected ? "connection reset" : null)],
            store ?? Store(), [], 10, 5, null);

    private static StoreState Store(long pendingBytes = 0, OutboxState? outbox = null, ForwarderState? forwarder = null, string? lastError = null) =>
        new("influxdb", "http://127.0.0.1:8086", 5, T0, lastError, pendingBytes / 100, pendingBytes, 1000, outbox, forwarder, forwarder == ForwarderState.Failing ? "connection refused" : null);

    private static async Task<HealthCheckResult> Check(StatusSnapshot s)
    {
        var status = new MonitorStatus();
        status.Publish(s);
        return await new MonitorHealthCheck(status).CheckHealthAsync(new HealthCheckContext());
    }

    [Fact]
    public async Task Check_AllWell_Healthy() => Assert.Equal(HealthStatus.Healthy, (await Check(Running())).Status);

    [Theory]
    [InlineData("source", "source opcua disconnected: connection reset")]
    [InlineData("forwarder", "store behind: InfluxDB not accepting (connection refused), 1 records held in the outbox")]
    [InlineData("half", "outbox filling: 600 of 1000 bytes")]
    [InlineData("shedding", "outbox filling: shedding at 990 of 1000 bytes")]
    [InlineData("write", "store write failing: disk full")]
    public async Task Check_Trouble_DegradedWithTheReason(string trouble, string reason)
    {
        StatusSnapshot s = trouble switch
        {
            "source" => Running(source: SourceState.Disconnected),
            "forwarder" => Running(Store(pendingBytes: 100, forwarder: ForwarderState.Failing)),
            "half" => Running(Store(pendingBytes: 600)),
            "shedding" => Running(Store(pendingBytes: 990, outbox: OutboxState.Shedding)),
            _ => Running(Store(lastError: "disk full")),
        };

        HealthCheckResult result = await Check(s);

        Assert.Equal(HealthStatus.Degraded, result.Status);
        Assert.Equal(reason, result.Description);
    }

    [Fact]
    public async Task Check_MonitorFailed_Unhealthy()
    {
        HealthCheckResult result = await Check(Running() with { Phase = "failed", Failure = "boom" });

        Assert.Equal(HealthStatus.Unhealthy, result.Status);
        Assert.Equal("monitor failed: boom", result.Description);
    }
}

using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Tieflow.Service.Monitor;
using Tieflow.Storage.Tests.Influx;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>The InfluxDB kind of store: records go through the outbox and its forwarder to a real server (victoria-metrics) on loopback.</summary>
public sealed class InfluxStoreRunTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(60);
    private readonly TempFolder _folder = new();
    private readonly VictoriaMetricsServer _server = new();

    public void Dispose()
    {
        _server.Dispose();
        _folder.Dispose();
    }

    [Theory]
    [InlineData(null)]
    [InlineData("false")]
    public async Task Run_InfluxStore_RecordsReachTheServerWithSiteAndUnitTags(string? gzip)
    {
        string[] arguments =
        [
            "--Tieflow:Source:Speed=100000", "--Tieflow:Store:Kind=influxdb", $"--Tieflow:Store:Url={_server.Url}",
            "--Tieflow:Store:Org=brackenmoor", "--Tieflow:Store:Bucket=tieflow", "--Tieflow:Store:OutboxPath=outbox/outbox.db",
            .. gzip is null ? Array.Empty<string>() : [$"--Tieflow:Store:Gzip={gzip}"],
        ];
        long written = 0;
        MonitorStatus? final = null;
        HostRun run = HostRun.Of(
            HostRun.Request(_folder.Path, arguments) with
            {
                Environment = name => name == "TIEFLOW_INFLUX_TOKEN" ? "test-token" : null,
            },
            started: host =>
            {
                var status = host.Services.GetRequiredService<MonitorStatus>();
                final = status;
                var clock = System.Diagnostics.Stopwatch.StartNew();
                while (clock.Elapsed < Patience && (status.Current.Store?.Written ?? 0) < 40)
                {
                    Thread.Sleep(50);
                }

                written = status.Current.Store?.Written ?? 0;
                Assert.Equal("influxdb", status.Current.Store!.Kind);
                host.Services.GetRequiredService<IHostApplicationLifetime>().StopApplication();
            });

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.True(written >= 40, $"only {written} records acknowledged");

        // A clean stop: the monitor finished (it did not time out) and the outbox was drained to the server.
        Assert.Equal("stopped", final!.Current.Phase);
        Assert.Equal(0, final.Current.Store!.PendingRecords);
        Assert.True(File.Exists(_folder.PathOf("outbox/outbox.db")), "the outbox file is under the working directory");
        Dictionary<string, List<double>> exported = await _server.ExportAsync(expected: 40);
        Assert.Contains(exported.Keys, k => k.StartsWith("tieflow_stage_efficiency{", StringComparison.Ordinal) && k.Contains("site=Brackenmoor", StringComparison.Ordinal) && k.Contains("unit=X300", StringComparison.Ordinal));
        Assert.Contains(exported.Keys, k => k.StartsWith("tieflow_soft_sensor_value{", StringComparison.Ordinal));
        Assert.DoesNotContain("test-token", run.Output + run.Error, StringComparison.Ordinal);
    }
}

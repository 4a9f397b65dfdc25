using System.Net;
using System.Text.Json;
using System.Threading.Channels;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using Tieflow.Service.Health;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Hosting;

/// <summary><c>/health</c> and <c>/status</c> answer over loopback while the monitor runs.</summary>
public sealed class HealthEndpointTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(60);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Endpoints_DemoRunning_HealthyAndStatusPerUnit()
    {
        string? health = null;
        JsonDocument? status = null;
        HostRun run = HostRun.Of(HostRun.Request(_folder.Path, "--Tieflow:Source:Speed=100000"), started: host =>
        {
            using var http = new HttpClient { Timeout = TimeSpan.FromSeconds(10) };
            Uri address = host.Services.GetRequiredService<HealthServer>().Address!;
            Assert.Equal("127.0.0.1", address.Host);

            // Wait for the first window with a stage efficiency and the soft sensor (an event, not a time budget).
            status = WaitFor(() =>
            {
                var doc = JsonDocument.Parse(http.GetStringAsync(new Uri(address, "status")).GetAwaiter().GetResult());
                JsonElement u = doc.RootElement.GetProperty("units")[0];
                return u.GetProperty("stages")[0].GetProperty("efficiency").ValueKind == JsonValueKind.Number && u.GetProperty("softSensor").ValueKind == JsonValueKind.Object ? doc : null;
            });
            HttpResponseMessage response = http.GetAsync(new Uri(address, "health")).GetAwaiter().GetResult();
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            health = response.Content.ReadAsStringAsync().GetAwaiter().GetResult();
            host.Services.GetRequiredService<IHostApplicationLifetime>().StopApplication();
        });

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal("Healthy", health);
        JsonElement root = status!.RootElement;
        Assert.Equal("Brackenmoor", root.GetProperty("site").GetString());
        Assert.Equal("sqlite", root.GetProperty("store").GetProperty("kind").GetString());
        Assert.Equal("connected", root.GetProperty("sources")[0].GetProperty("state").GetString());
        JsonElement unit = root.GetProperty("units")[0];
        Assert.Equal("X300", unit.GetProperty("id").GetString());
        Assert.Equal(4, unit.GetProperty("stages").GetArrayLength());
        Assert.InRange(unit.GetProperty("stages")[0].GetProperty("efficiency").GetDouble(), 0.5, 1.05);
        Assert.True(unit.GetProperty("stages")[0].GetProperty("sigma").GetDouble() > 0);
        Assert.Equal(0.1, unit.GetProperty("softSensor").GetProperty("spec").GetDouble(), 6);
        Assert.Equal(JsonValueKind.Array, unit.GetProperty("alerts").ValueKind);
        Assert.Contains("not a safety system", root.GetProperty("notice").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Health_SourceDisconnected_DegradedWithReasonAndSourceGapAlert()
    {
        string? health = null;
        string? status = null;
        HostRun run = HostRun.Of(HostRun.Request(_folder.Path), services =>
        {
            services.RemoveAll<ISignalSourceFactory>();
            services.AddSingleton<ISignalSourceFactory, LosingSourceFactory>();
        }, host =>
        {
            using var http = new HttpClient { Timeout = TimeSpan.FromSeconds(10) };
            Uri address = host.Services.GetRequiredService<HealthServer>().Address!;
            health = WaitFor(() =>
            {
                string text = http.GetStringAsync(new Uri(address, "health")).GetAwaiter().GetResult();
                return text.Contains("disconnected", StringComparison.Ordinal) ? text : null;
            });
            status = http.GetStringAsync(new Uri(address, "status")).GetAwaiter().GetResult();
            host.Services.GetRequiredService<IHostApplicationLifetime>().StopApplication();
        });

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal("Degraded: source losing disconnected: server went away", health);
        Assert.Contains("\"kind\": \"source-gap\"", status, StringComparison.Ordinal);
    }

    [Fact]
    public void Health_Disabled_NoServer()
    {
        HostRun run = HostRun.Of(HostRun.Request(_folder.Path, "--Tieflow:Health:Enabled=false", "--Tieflow:Source:Speed=100000"), started: host =>
        {
            Assert.Null(host.Services.GetService<HealthServer>());
            host.Services.GetRequiredService<IHostApplicationLifetime>().StopApplication();
        });

        Assert.True(run.ExitCode == 0, run.Error);
    }

    private static T WaitFor<T>(Func<T?> probe)
        where T : class
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (clock.Elapsed < Patience)
        {
            if (probe() is { } value)
            {
                return value;
            }

            Thread.Sleep(50);
        }

        throw new TimeoutException($"the condition did not hold within {Patience}");
    }

    /// <summary>A source that connects and is then lost (kind simulator, so the settings of the default select it).</summary>
    private sealed class LosingSourceFactory : ISignalSourceFactory
    {
        public string? Kind => "simulator";

        public IReadOnlyList<ISignalSource> Create(SourceContext context) => [new LosingSource()];
    }

    private sealed class LosingSource : ISignalSource
    {
        public string Name => "losing";

        public async Task RunAsync(ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
        {
            var t0 = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
            await output.WriteAsync(new SourceStateChanged(SourceState.Connected, t0, "test"), cancellationToken);
            await output.WriteAsync(new SourceStateChanged(SourceState.Disconnected, t0.AddMinutes(1), "server went away"), cancellationToken);
            await Task.Delay(Timeout.Infinite, cancellationToken);
        }
    }
}

using System.Collections.Concurrent;
using System.Net;
using System.Net.Sockets;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>The OPC UA password and the InfluxDB token never appear in a log message, the console or the status.</summary>
[Trait("Category", "Slow")]
public sealed class SecretLoggingTests : IDisposable
{
    private const string Password = "pw-7f3a-never-logged";
    private const string Token = "tok-91c2-never-logged";
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Run_InfluxStoreUnreachable_TokenAndPasswordNeverLogged()
    {
        var logs = new CapturingLoggerProvider();
        int closedPort = ClosedPort();
        HostRun run = HostRun.Of(
            HostRun.Request(_folder.Path, "--Tieflow:Source:Speed=100000", "--Tieflow:Store:Kind=influxdb", $"--Tieflow:Store:Url=http://127.0.0.1:{closedPort}",
                "--Tieflow:Store:Org=site", "--Tieflow:Store:Bucket=tieflow", "--Tieflow:Store:OutboxPath=outbox.db", "--Tieflow:Source:User=tieflow") with
            {
                MaxRuntime = TimeSpan.FromSeconds(3),
                Environment = Secrets,
            },
            services => services.AddSingleton<ILoggerProvider>(logs));

        Assert.True(run.ExitCode == 0, run.Error);
        string all = logs.Text + run.Output + run.Error;
        Assert.Contains("password set (not shown)", logs.Text, StringComparison.Ordinal);
        Assert.Contains("token set (not shown)", logs.Text, StringComparison.Ordinal);
        Assert.Contains("Tieflow.Monitor", logs.Text, StringComparison.Ordinal);
        Assert.DoesNotContain(Password, all, StringComparison.Ordinal);
        Assert.DoesNotContain(Token, all, StringComparison.Ordinal);
    }

    [Fact]
    public void Run_OpcUaSourceWithUser_PasswordNeverLogged()
    {
        var logs = new CapturingLoggerProvider();
        int closedPort = ClosedPort();
        HostRun run = HostRun.Of(
            HostRun.Request(_folder.Path, "--Tieflow:Source:Kind=opcua", $"--Tieflow:Source:Endpoint=opc.tcp://127.0.0.1:{closedPort}", "--Tieflow:Source:User=tieflow",
                $"--Tieflow:Plant={Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json")}") with
            {
                MaxRuntime = TimeSpan.FromSeconds(3),
                Environment = Secrets,
            },
            services => services.AddSingleton<ILoggerProvider>(logs));

        Assert.DoesNotContain(Password, logs.Text + run.Output + run.Error, StringComparison.Ordinal);
    }

    private static string? Secrets(string name) => name switch
    {
        "TIEFLOW_OPCUA_PASSWORD" => Password,
        "TIEFLOW_INFLUX_TOKEN" => Token,
        _ => null,
    };

    private static int ClosedPort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        int port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        return port;
    }

    /// <summary>Keeps every message, its structured values and any exception text, at every level.</summary>
    private sealed class CapturingLoggerProvider : ILoggerProvider
    {
        private readonly ConcurrentQueue<string> _lines = new();

        public string Text => string.Join(Environment.NewLine, _lines);

        public ILogger CreateLogger(string categoryName) => new Logger(categoryName, _lines);

        public void Dispose()
        {
        }

        private sealed class Logger(string category, ConcurrentQueue<string> lines) : ILogger
        {
            public IDisposable? BeginScope<TState>(TState state)
                where TState : notnull => null;

            public bool IsEnabled(LogLevel logLevel) => true;

            public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
            {
                string values = state is IEnumerable<KeyValuePair<string, object?>> pairs ? string.Join(" ", pairs.Select(p => $"{p.Key}={p.Value}")) : string.Empty;
                lines.Enqueue($"{category}[{eventId.Id}] {formatter(state, exception)} {values} {exception}");
            }
        }
    }
}

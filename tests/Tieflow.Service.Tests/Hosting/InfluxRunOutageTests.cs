using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text.Json;
using Tieflow.Storage.Tests.Influx;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// A store outage under a whole <c>tieflow run</c> (the InfluxDB kind of store with its outbox, in front of a real
/// victoria-metrics on loopback): the server is stopped (SIGTERM) once the run has written some windows, stays away
/// while the run goes on for <see cref="OutageWindows"/> more windows (8 at 5,000 times real time in CI, about 8 s away;
/// <c>eng/soak/reliability.sh run-outage</c> sets <c>TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS</c> = 250 and
/// <c>TIEFLOW_SOAK_RUN_OUTAGE_SPEED</c> = 1000, about 7.5 minutes away) and until <c>/health</c> and the console summary
/// report the store behind, and is started again on the same port and data folder. Once the outbox has forwarded every
/// point it held at the end of the outage the run is stopped cleanly. Every point acknowledged before the outage (on the
/// server or in the outbox just before the stop) and during it (in the outbox at its end) must be on the server exactly
/// once: one raw sample of its key, of the value acknowledged. A run that is never restarted writes each key once, so
/// unlike <see cref="InfluxRunCrashTests"/> no rewrite is allowed here. The counts go to the test output.
/// The same path with the outbox and the forwarder inside the test process, at soak size:
/// tests/Tieflow.Storage.Tests/Influx/OutboxOutageTests.cs.
/// </summary>
[Trait("Category", "Slow")]
public sealed class InfluxRunOutageTests : IDisposable
{
    /// <summary>The windows of X300 (half an hour of plant time each) in the demo's week.</summary>
    private const int ScenarioWindows = 7 * 48;

    /// <summary>Windows of X300 the run writes while the server is away, at the least: 8 in CI, <c>TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS</c> in the soak.</summary>
    private static readonly int OutageWindows = SoakSize.Of("TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS", 8);

    /// <summary>Times real time of the simulated source: 5,000 in CI, <c>TIEFLOW_SOAK_RUN_OUTAGE_SPEED</c> in the soak.</summary>
    private static readonly int Speed = SoakSize.Of("TIEFLOW_SOAK_RUN_OUTAGE_SPEED", 5000);

    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(180);
    private readonly TempFolder _folder = new();
    private readonly VictoriaMetricsServer _server = new();
    private readonly HttpClient _http = new() { Timeout = TimeSpan.FromSeconds(10) };
    private readonly ITestOutputHelper _log;
    private readonly int _port = FreePort();

    public InfluxRunOutageTests(ITestOutputHelper log) => _log = log;

    public void Dispose()
    {
        _http.Dispose();
        _server.Dispose();
        _folder.Dispose();
    }

    [Fact]
    public async Task Run_InfluxServerStoppedAndStartedAgain_EveryAcknowledgedPointArrivesExactlyOnce()
    {
        string outbox = Path.Combine(_folder.Path, InfluxRun.OutboxPath);
        var health = new Uri($"http://127.0.0.1:{_port}/health");
        var clock = Stopwatch.StartNew();

        // The demo's week must outlast the outage and the drain: the run stops by itself at its end.
        Assert.True(OutageWindows <= ScenarioWindows - 40, $"environment variable TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS: {OutageWindows} windows do not fit in the demo's week ({ScenarioWindows} windows) with 40 to spare");
        _log.WriteLine($"speed {Speed} times real time, the server away for {OutageWindows} windows at the least");
        using TieflowProcess run = InfluxRun.Start(_folder.Path, _server.Url, $"--Tieflow:Source:Speed={Speed}", $"--Tieflow:Health:Port={_port}");
        JsonElement first = WaitForStatus(run, s => Windows(s) >= 6 && Store(s).GetProperty("written").GetInt64() > 0, "six windows written");

        // Acknowledged before the outage: the outbox read first, then the server, so that a point forwarded in between is in one of them.
        Dictionary<string, double> beforePending = InfluxRun.Pending(outbox);
        Dictionary<string, List<double>> beforeExported = await _server.ExportAsync();
        var acknowledged = new Dictionary<string, double>(beforePending, StringComparer.Ordinal);
        foreach ((string key, List<double> values) in beforeExported)
        {
            acknowledged[key] = values[0];
        }

        int before = acknowledged.Count;
        int windowsAtStop = Windows(Status(run));
        _server.Stop();
        TimeSpan stopped = clock.Elapsed;
        _log.WriteLine($"{stopped.TotalSeconds:F1} s: server stopped at {windowsAtStop} windows; {before} points acknowledged ({beforeExported.Count} on the server, {beforePending.Count} in the outbox), {Store(first).GetProperty("written").GetInt64()} records written at the six-window mark");

        // The run goes on: the outbox holds what it writes, /health and the console summary say the store is behind.
        JsonElement behind = WaitForStatus(run, s => Store(s).GetProperty("problem").GetString() is { } p && p.StartsWith("store behind", StringComparison.Ordinal), "the store reported behind");
        _log.WriteLine($"{clock.Elapsed.TotalSeconds:F1} s: status problem \"{Store(behind).GetProperty("problem").GetString()}\", forwarder {Store(behind).GetProperty("forwarder").GetString()}");
        string degraded = WaitFor(run, () => Get(health) is { } h && h.StartsWith("Degraded: ", StringComparison.Ordinal) && h.Contains("store behind: InfluxDB not accepting", StringComparison.Ordinal) ? h : null, "/health degraded");
        Assert.True(
            run.WaitUntil(() => run.Output.Contains("in the outbox (store behind: InfluxDB not accepting", StringComparison.Ordinal), Patience),
            $"the console summary never reported the store behind: {run.Output}\n{run.Error}");
        _log.WriteLine($"{clock.Elapsed.TotalSeconds:F1} s: console \"{run.Output.Split('\n').First(l => l.Contains("(store behind", StringComparison.Ordinal)).Trim()}\"");
        // Bounded generously: the usual patience and three times the wall time the outage windows take at the run's speed.
        TimeSpan away = Patience + TimeSpan.FromSeconds(3.0 * OutageWindows * 1800 / Speed);
        JsonElement late = WaitForStatus(run, s => Windows(s) >= windowsAtStop + OutageWindows, $"{OutageWindows} windows during the outage", away);
        Assert.NotEqual("forwarding", Store(late).GetProperty("forwarder").GetString());

        // The end of the outage: everything acknowledged since the stop is in the outbox (nothing can leave it now).
        Dictionary<string, double> peak = InfluxRun.Pending(outbox);
        long peakRecords = Store(Status(run)).GetProperty("pendingRecords").GetInt64();
        int during = 0;
        foreach ((string key, double value) in peak)
        {
            if (acknowledged.TryGetValue(key, out double earlier))
            {
                Assert.True(InfluxRun.Same(earlier, value), $"{key} was {earlier} before the outage and is {value} in the outbox");
            }
            else
            {
                acknowledged[key] = value;
                during++;
            }
        }

        Assert.True(during > 0, $"nothing acknowledged during the outage: {peak.Count} points in the outbox");
        int windowsAway = Windows(late) - windowsAtStop;
        long peakRss = SoakSize.PeakRssKib(run.Id) ?? 0;
        _log.WriteLine($"{clock.Elapsed.TotalSeconds:F1} s: server started again after {(clock.Elapsed - stopped).TotalSeconds:F1} s away and {windowsAway} windows; {during} points acknowledged during the outage, {peak.Count} points in the outbox (/status just after: {peakRecords} records); /health \"{degraded}\"");
        _server.Start();
        TimeSpan started = clock.Elapsed;

        // Drained: none of the points held at the end of the outage is still in the outbox, and /health is healthy again.
        Assert.True(
            run.WaitUntil(() => !InfluxRun.Pending(outbox).Keys.Any(peak.ContainsKey), Patience),
            $"the outbox still holds points of the outage {Patience.TotalSeconds:F0} s after the server came back: {run.Output}\n{run.Error}");
        TimeSpan drained = clock.Elapsed;
        WaitFor(run, () => Get(health) == "Healthy" ? "Healthy" : null, "/health healthy again");
        JsonElement after = Status(run);
        _log.WriteLine($"{clock.Elapsed.TotalSeconds:F1} s: the outage's points forwarded {(drained - started).TotalSeconds:F1} s after the server came back; /health Healthy, forwarder {Store(after).GetProperty("forwarder").GetString()}, {Store(after).GetProperty("pendingRecords").GetInt64()} records in the outbox");

        peakRss = Math.Max(peakRss, SoakSize.PeakRssKib(run.Id) ?? 0);
        run.Terminate();
        Assert.True(run.WaitForExit(Patience) == 0, $"the run did not stop cleanly: {run.Output}\n{run.Error}");
        Assert.Empty(InfluxRun.Pending(outbox));
        Assert.DoesNotContain("test-token", run.Output + run.Error, StringComparison.Ordinal);

        // Exactly once: every acknowledged point on the server, one raw sample of its key, of the value acknowledged.
        Dictionary<string, List<double>> final = await _server.ExportAsync(expected: acknowledged.Count);
        var missing = acknowledged.Keys.Where(k => !final.ContainsKey(k)).ToList();
        Assert.True(missing.Count == 0, $"{missing.Count} of {acknowledged.Count} acknowledged points missing on the server ({before} before the outage, {during} during it), for example {string.Join("; ", missing.Take(5))}");
        var twice = final.Where(e => e.Value.Count != 1).Select(e => $"{e.Key} x{e.Value.Count} ({string.Join(", ", e.Value)})").ToList();
        Assert.True(twice.Count == 0, $"{twice.Count} points with more than one raw sample, for example {string.Join("; ", twice.Take(5))}");
        foreach ((string key, double value) in acknowledged)
        {
            Assert.True(InfluxRun.Same(value, final[key][0]), $"{key}: acknowledged {value}, on the server {final[key][0]}");
        }

        _log.WriteLine($"at the end, {clock.Elapsed.TotalSeconds:F0} s: {acknowledged.Count} points acknowledged ({before} before the outage, {during} during it, {peak.Count} pending at the peak), "
            + $"{final.Count} distinct points on the server ({final.Values.Sum(v => v.Count)} raw samples; {final.Count - acknowledged.Count} more written after the outage), each acknowledged one there once with its value; "
            + $"plant time up to {InfluxRun.Latest(final.Keys):u}; monitor peak RSS {peakRss / 1024} MB");
    }

    private static int Windows(JsonElement status) => status.GetProperty("units")[0].GetProperty("windows").GetInt32();

    private static JsonElement Store(JsonElement status) => status.GetProperty("store");

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    /// <summary>The body of a GET, or null while the run's endpoint does not answer yet.</summary>
    private string? Get(Uri address)
    {
        try
        {
            return _http.GetStringAsync(address).GetAwaiter().GetResult();
        }
        catch (Exception e) when (e is HttpRequestException or TaskCanceledException)
        {
            return null;
        }
    }

    private JsonElement Status(TieflowProcess run) => WaitForStatus(run, _ => true, "/status");

    private JsonElement WaitForStatus(TieflowProcess run, Func<JsonElement, bool> condition, string what, TimeSpan? patience = null)
    {
        JsonElement found = default;
        WaitFor(
            run,
            () =>
            {
                if (Get(new Uri($"http://127.0.0.1:{_port}/status")) is not { } text)
                {
                    return null;
                }

                using var doc = JsonDocument.Parse(text);
                JsonElement root = doc.RootElement.Clone();
                if (root.GetProperty("units").GetArrayLength() == 0 || root.GetProperty("store").ValueKind != JsonValueKind.Object || !condition(root))
                {
                    return null;
                }

                found = root;
                return text;
            },
            what,
            patience);
        return found;
    }

    private static T WaitFor<T>(TieflowProcess run, Func<T?> probe, string what, TimeSpan? patience = null)
        where T : class
    {
        T? found = default;
        TimeSpan bound = patience ?? Patience;
        Assert.True(run.WaitUntil(() => (found = probe()) is not null, bound), $"{what}: not within {bound.TotalSeconds:F0} s{(run.HasExited ? " (the run ended)" : string.Empty)}: {run.Output}\n{run.Error}");
        return found!;
    }
}

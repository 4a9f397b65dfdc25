using Tieflow.Storage.Tests.Influx;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// Crash safety of the InfluxDB kind of store: <c>tieflow run</c> with the outbox in front of a real server
/// (victoria-metrics on loopback) killed with SIGKILL while it writes, three times in CI and <c>TIEFLOW_SOAK_KILLS</c>
/// times in the soak (<c>eng/soak/reliability.sh kills</c>), each kill a seeded random 0 to 500 ms after the run has
/// written its windows (<see cref="KillDelays"/>), then run once more and stopped cleanly. What is acknowledged is
/// what the outbox committed: after each kill every point acknowledged so far is either on the server or still in the
/// outbox, and at the end every one is on the server, once as a distinct point.
/// A point is keyed by series (measurement, field, tags) and timestamp and is idempotent by that key: a batch that the
/// server took just before a kill is sent again by the next run, and a restarted run rewrites the same plant time
/// from the scenario's start. victoria-metrics (without deduplication) keeps such a rewrite as a second raw sample of
/// the same key where InfluxDB overwrites it, so the test counts distinct keys and checks that every raw sample of a
/// key has the same value: a rewrite, never a second, different point.
/// </summary>
[Trait("Category", "Slow")]
public sealed class InfluxRunCrashTests : IDisposable
{
    private static readonly int Kills = SoakSize.Of("TIEFLOW_SOAK_KILLS", 3);
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(180);
    private readonly TempFolder _folder = new();
    private readonly VictoriaMetricsServer _server = new();
    private readonly ITestOutputHelper _log;

    public InfluxRunCrashTests(ITestOutputHelper log) => _log = log;

    public void Dispose()
    {
        _server.Dispose();
        _folder.Dispose();
    }

    [Fact]
    public async Task Run_InfluxStoreKilledWhileWriting_LosesNothingAcknowledgedAndDuplicatesNothing()
    {
        string outbox = Path.Combine(_folder.Path, InfluxRun.OutboxPath);
        var acknowledged = new Dictionary<string, double>(StringComparer.Ordinal);
        var clock = System.Diagnostics.Stopwatch.StartNew();
        long peak = 0;
        KillDelays delays = KillDelays.FromEnvironment();
        _log.WriteLine($"kill delays: seed {delays.Seed}, 0 to {KillDelays.Longest.TotalMilliseconds:F0} ms after the window target");
        for (int kill = 1; kill <= Kills; kill++)
        {
            // Killed once it has written a few windows, after a seeded extra wait: the kills land at different phases of
            // the outbox's appends and of the forwarder's sends and removals.
            using TieflowProcess run = Start();
            int target = (kill * 6) + 4;
            Assert.True(InfluxRun.WaitForWindows(run, target, Patience), $"kill {kill}: fewer than {target} windows: {run.Output}\n{run.Error}");
            TimeSpan delay = delays.Next();
            await Task.Delay(delay);
            Assert.False(run.HasExited, $"kill {kill}: the run ended before the kill: {run.Output}\n{run.Error}");
            peak = Math.Max(peak, SoakSize.PeakRssKib(run.Id) ?? 0);
            run.KillHard();

            // Acknowledged so far: what reached the server and what the outbox still holds.
            Dictionary<string, List<double>> exported = await _server.ExportAsync();
            Dictionary<string, double> pending = InfluxRun.Pending(outbox);
            Assert.True(exported.Count + pending.Count > 0, $"kill {kill}: nothing acknowledged");
            _log.WriteLine($"kill {kill}, {delay.TotalMilliseconds:F0} ms after the window target: {exported.Count} distinct points on the server ({exported.Values.Sum(v => v.Count)} raw samples), {pending.Count} in the outbox, plant time up to {InfluxRun.Latest(exported.Keys.Concat(pending.Keys)):u}");
            var lost = acknowledged.Keys.Where(k => !exported.ContainsKey(k) && !pending.ContainsKey(k)).ToList();
            Assert.True(lost.Count == 0, $"kill {kill}: {lost.Count} acknowledged points neither on the server nor in the outbox, for example {string.Join("; ", lost.Take(5))}");
            foreach ((string key, double value) in pending.Concat(exported.Select(e => KeyValuePair.Create(e.Key, e.Value[0]))))
            {
                Assert.True(!acknowledged.TryGetValue(key, out double before) || InfluxRun.Same(before, value), $"kill {kill}: {key} was {before} and is now {value}");
                acknowledged[key] = value;
            }
        }

        // A last run, stopped cleanly: it forwards what the outbox still holds.
        using (TieflowProcess last = Start())
        {
            Assert.True(InfluxRun.WaitForWindows(last, 4, Patience), $"last run: {last.Output}\n{last.Error}");
            peak = Math.Max(peak, SoakSize.PeakRssKib(last.Id) ?? 0);
            last.Terminate();
            Assert.Equal(0, last.WaitForExit(Patience));
        }

        Assert.Empty(InfluxRun.Pending(outbox));
        Dictionary<string, List<double>> final = await _server.ExportAsync(expected: acknowledged.Count);
        var missing = acknowledged.Keys.Where(k => !final.ContainsKey(k)).ToList();
        Assert.True(missing.Count == 0, $"{missing.Count} of {acknowledged.Count} acknowledged points missing on the server, for example {string.Join("; ", missing.Take(5))}");
        foreach ((string key, List<double> values) in final)
        {
            Assert.True(values.All(v => InfluxRun.Same(values[0], v)), $"{key}: {values.Count} samples of different values ({string.Join(", ", values)}): a duplicate, not a rewrite");
            if (acknowledged.TryGetValue(key, out double value))
            {
                Assert.True(InfluxRun.Same(value, values[0]), $"{key}: acknowledged {value}, on the server {values[0]}");
            }
        }

        int raw = final.Values.Sum(v => v.Count);
        _log.WriteLine($"at the end, {Kills} kills and a clean stop in {clock.Elapsed.TotalSeconds:F0} s: {final.Count} distinct points on the server ({raw} raw samples), {acknowledged.Count} acknowledged before the last run, none missing, none of a different value, monitor peak RSS {peak / 1024} MB");
        Assert.True(final.Count >= acknowledged.Count && raw >= final.Count, $"{final.Count} distinct points, {raw} raw samples, {acknowledged.Count} acknowledged");
    }

    private TieflowProcess Start() => InfluxRun.Start(_folder.Path, _server.Url, "--Tieflow:Source:Speed=20000", "--Tieflow:Health:Enabled=false");
}

using System.Globalization;
using System.Text.RegularExpressions;
using Microsoft.Data.Sqlite;
using Tieflow.Storage.Points;
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
public sealed partial class InfluxRunCrashTests : IDisposable
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
        string outbox = Path.Combine(_folder.Path, "outbox", "outbox.db");
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
            Assert.True(WaitForWindows(run, target, Patience), $"kill {kill}: fewer than {target} windows: {run.Output}\n{run.Error}");
            TimeSpan delay = delays.Next();
            await Task.Delay(delay);
            Assert.False(run.HasExited, $"kill {kill}: the run ended before the kill: {run.Output}\n{run.Error}");
            peak = Math.Max(peak, SoakSize.PeakRssKib(run.Id) ?? 0);
            run.KillHard();

            // Acknowledged so far: what reached the server and what the outbox still holds.
            Dictionary<string, List<double>> exported = await _server.ExportAsync();
            Dictionary<string, double> pending = Pending(outbox);
            Assert.True(exported.Count + pending.Count > 0, $"kill {kill}: nothing acknowledged");
            _log.WriteLine($"kill {kill}, {delay.TotalMilliseconds:F0} ms after the window target: {exported.Count} distinct points on the server ({exported.Values.Sum(v => v.Count)} raw samples), {pending.Count} in the outbox, plant time up to {Latest(exported.Keys.Concat(pending.Keys)):u}");
            var lost = acknowledged.Keys.Where(k => !exported.ContainsKey(k) && !pending.ContainsKey(k)).ToList();
            Assert.True(lost.Count == 0, $"kill {kill}: {lost.Count} acknowledged points neither on the server nor in the outbox, for example {string.Join("; ", lost.Take(5))}");
            foreach ((string key, double value) in pending.Concat(exported.Select(e => KeyValuePair.Create(e.Key, e.Value[0]))))
            {
                Assert.True(!acknowledged.TryGetValue(key, out double before) || Same(before, value), $"kill {kill}: {key} was {before} and is now {value}");
                acknowledged[key] = value;
            }
        }

        // A last run, stopped cleanly: it forwards what the outbox still holds.
        using (TieflowProcess last = Start())
        {
            Assert.True(WaitForWindows(last, 4, Patience), $"last run: {last.Output}\n{last.Error}");
            peak = Math.Max(peak, SoakSize.PeakRssKib(last.Id) ?? 0);
            last.Terminate();
            Assert.Equal(0, last.WaitForExit(Patience));
        }

        Assert.Empty(Pending(outbox));
        Dictionary<string, List<double>> final = await _server.ExportAsync(expected: acknowledged.Count);
        var missing = acknowledged.Keys.Where(k => !final.ContainsKey(k)).ToList();
        Assert.True(missing.Count == 0, $"{missing.Count} of {acknowledged.Count} acknowledged points missing on the server, for example {string.Join("; ", missing.Take(5))}");
        foreach ((string key, List<double> values) in final)
        {
            Assert.True(values.All(v => Same(values[0], v)), $"{key}: {values.Count} samples of different values ({string.Join(", ", values)}): a duplicate, not a rewrite");
            if (acknowledged.TryGetValue(key, out double value))
            {
                Assert.True(Same(value, values[0]), $"{key}: acknowledged {value}, on the server {values[0]}");
            }
        }

        int raw = final.Values.Sum(v => v.Count);
        _log.WriteLine($"at the end, {Kills} kills and a clean stop in {clock.Elapsed.TotalSeconds:F0} s: {final.Count} distinct points on the server ({raw} raw samples), {acknowledged.Count} acknowledged before the last run, none missing, none of a different value, monitor peak RSS {peak / 1024} MB");
        Assert.True(final.Count >= acknowledged.Count && raw >= final.Count, $"{final.Count} distinct points, {raw} raw samples, {acknowledged.Count} acknowledged");
    }

    private TieflowProcess Start() => new(
        _folder.Path,
        new Dictionary<string, string> { ["TIEFLOW_INFLUX_TOKEN"] = "test-token" },
        "run", "--Tieflow:Source:Speed=20000", "--Tieflow:Health:Enabled=false", "--Tieflow:Store:Kind=influxdb", $"--Tieflow:Store:Url={_server.Url}",
        "--Tieflow:Store:Org=brackenmoor", "--Tieflow:Store:Bucket=tieflow", "--Tieflow:Store:OutboxPath=outbox/outbox.db");

    /// <summary>The latest time of the points keyed "...@ms".</summary>
    private static DateTimeOffset Latest(IEnumerable<string> keys) =>
        DateTimeOffset.FromUnixTimeMilliseconds(keys.Select(k => long.Parse(k[(k.LastIndexOf('@') + 1)..], CultureInfo.InvariantCulture)).DefaultIfEmpty(0).Max());

    /// <summary>victoria-metrics keeps about 12 significant digits (tests/Tieflow.Storage.Tests/Influx/ExpectedSamples.cs).</summary>
    private static bool Same(double a, double b) => Math.Abs(a - b) <= 1e-11 * Math.Max(1.0, Math.Abs(a));

    /// <summary>The points the outbox holds, as the keys victoria-metrics gives them: "measurement_field{sorted tags}@ms" to the value (strings as 0).</summary>
    private static Dictionary<string, double> Pending(string path)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        if (!File.Exists(path))
        {
            return result;
        }

        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        connection.Open();
        using SqliteCommand command = connection.CreateCommand();
        command.CommandText = "SELECT line FROM outbox ORDER BY id;";
        using SqliteDataReader reader = command.ExecuteReader();
        while (reader.Read())
        {
            (string measurement, string tags, string fields, string time) = Split(reader.GetString(0));
            string labels = string.Join(',', LineProtocol.ParseTags(tags).Select(t => $"{t.Key}={t.Value}").Order(StringComparer.Ordinal));
            foreach (var (field, value) in LineProtocol.ParseFields(fields))
            {
                result[$"{measurement}_{field}{{{labels}}}@{time}"] = value is double d ? d : 0.0;
            }
        }

        return result;
    }

    /// <summary>A line of line protocol in its parts: the measurement, the tags, the fields and the timestamp (ms).</summary>
    private static (string Measurement, string Tags, string Fields, string Time) Split(string line)
    {
        int headEnd = Unescaped(line, ' ', 0, quotes: false);
        int timeStart = line.LastIndexOf(' ') + 1;
        string head = line[..headEnd];
        int comma = Unescaped(head, ',', 0, quotes: false);
        string measurement = comma < 0 ? head : head[..comma];
        string tags = comma < 0 ? string.Empty : head[(comma + 1)..];
        string time = line[timeStart..];
        Assert.True(long.TryParse(time, NumberStyles.Integer, CultureInfo.InvariantCulture, out _), $"outbox line without a timestamp: {line}");
        return (measurement, tags, line[(headEnd + 1)..(timeStart - 1)], time);
    }

    private static int Unescaped(string text, char what, int from, bool quotes)
    {
        for (int i = from; i < text.Length; i++)
        {
            if (text[i] == '\\')
            {
                i++;
            }
            else if (text[i] == what && !quotes)
            {
                return i;
            }
        }

        return -1;
    }

    private static bool WaitForWindows(TieflowProcess run, int windows, TimeSpan patience) => run.WaitUntil(
        () => WindowCount().Matches(run.Output) is { Count: > 0 } seen && int.Parse(seen[^1].Groups[1].Value, CultureInfo.InvariantCulture) >= windows,
        patience);

    [GeneratedRegex(@"X300: (\d+) windows")]
    private static partial Regex WindowCount();
}

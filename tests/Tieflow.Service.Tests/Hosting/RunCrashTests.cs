using System.Text.RegularExpressions;
using Tieflow.Storage.Sqlite;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// Crash safety of the embedded store: <c>tieflow run</c> killed with SIGKILL while it writes, three times in CI and
/// <c>TIEFLOW_SOAK_KILLS</c> times in the soak (<c>eng/soak/reliability.sh kills</c>), each kill a seeded random
/// 0 to 500 ms after the run has written its windows (<see cref="KillDelays"/>). After each kill the store passes
/// SQLite's integrity check and holds at least what it held before (records are committed in transactions, and a
/// record rewritten after a restart replaces its earlier copy: the key is time, measurement and tags, so nothing is
/// duplicated either).
/// </summary>
[Trait("Category", "Slow")]
public sealed partial class RunCrashTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(180);
    private readonly TempFolder _folder = new();
    private readonly ITestOutputHelper _log;

    public RunCrashTests(ITestOutputHelper log) => _log = log;

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Run_KilledWhileWriting_StoreStaysSoundAndKeepsWhatItHad()
    {
        string store = Path.Combine(_folder.Path, "tieflow-data", "tieflow.db");
        long before = 0;
        int kills = SoakSize.Of("TIEFLOW_SOAK_KILLS", 3);
        KillDelays delays = KillDelays.FromEnvironment();
        _log.WriteLine($"kill delays: seed {delays.Seed}, 0 to {KillDelays.Longest.TotalMilliseconds:F0} ms after the window target");
        var clock = System.Diagnostics.Stopwatch.StartNew();
        long peak = 0;
        for (int kill = 1; kill <= kills; kill++)
        {
            using var run = new TieflowProcess(_folder.Path, null, "run", "--Tieflow:Source:Speed=20000", "--Tieflow:Health:Enabled=false");

            // Kill it once it has written a few windows more than the store held (a later run rewrites the same plant
            // time first, from the scenario's start), after a seeded extra wait, so that each kill lands at another
            // phase of the write cycle.
            int target = (kill * 6) + 4;
            Assert.True(WaitForWindows(run, target, Patience), $"kill {kill}: fewer than {target} windows: {run.Output}\n{run.Error}");
            TimeSpan delay = delays.Next();
            Thread.Sleep(delay);
            Assert.False(run.HasExited, $"kill {kill}: the run ended before the kill: {run.Output}\n{run.Error}");
            long? rss = SoakSize.PeakRssKib(run.Id);
            run.KillHard();
            peak = Math.Max(peak, rss ?? 0);

            // What the kill left in the write-ahead log (read before the check opens the store and may checkpoint it).
            var wal = new FileInfo(store + "-wal");
            string walText = wal.Exists ? $"{wal.Length / 1024} KiB" : "none";

            using SqliteStoreReader reader = SqliteStoreReader.Open(store);
            Assert.Equal("ok", reader.IntegrityCheck());
            long count = reader.Count();
            Assert.True(count > 0, $"kill {kill}: the store is empty");
            Assert.True(count >= before, $"kill {kill}: the store held {before} records before and {count} after the restart and kill");
            _log.WriteLine($"kill {kill} at {clock.Elapsed.TotalSeconds:F0} s, {delay.TotalMilliseconds:F0} ms after the window target (write-ahead log {walText}): integrity ok, {count} records (before {before}), monitor peak RSS {(rss is long kib ? $"{kib / 1024} MB" : "not measurable")}");
            before = count;
        }

        _log.WriteLine($"{kills} kills in {clock.Elapsed.TotalSeconds:F0} s: every integrity check ok, records never fewer, {before} at the end; monitor peak RSS {peak / 1024} MB");

        CliRun show = CliRun.Of("show", "--store", store, "--json");
        Assert.True(show.ExitCode == 0, show.Error);
    }

    private static bool WaitForWindows(TieflowProcess run, int windows, TimeSpan patience) => run.WaitUntil(
        () => WindowCount().Matches(run.Output) is { Count: > 0 } seen && int.Parse(seen[^1].Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture) >= windows,
        patience);

    [GeneratedRegex(@"X300: (\d+) windows")]
    private static partial Regex WindowCount();
}

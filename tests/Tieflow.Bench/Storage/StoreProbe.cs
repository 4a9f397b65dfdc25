using System.Diagnostics;
using System.Globalization;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Points;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Bench.Storage;

/// <summary>
/// Target: the embedded store takes at least 200,000 records per second. Times writing records in batches of 10,000
/// and reports wall-clock and process CPU time, so a figure taken on a shared, busy machine can be judged:
/// <c>dotnet run -c Release --project tests/Tieflow.Bench -- store 400000</c>.
/// </summary>
internal static class StoreProbe
{
    public static async Task RunAsync(int count)
    {
        List<MonitorRecord> records = BenchRecords.Make(count);
        MonitorRecord[][] batches = [.. records.Chunk(10_000)];
        string folder = Path.Combine(Path.GetTempPath(), "tieflow-store-" + Guid.NewGuid().ToString("N")[..8]);
        Directory.CreateDirectory(folder);
        try
        {
            Measure("mapping only", count, () =>
            {
                foreach (MonitorRecord r in records)
                {
                    _ = RecordPoints.ToPoint(r, "Brackenmoor");
                }

                return Task.CompletedTask;
            });
            foreach (bool sync in new[] { true, false })
            {
                for (int round = 0; round < 2; round++)
                {
                    string path = Path.Combine(folder, $"store-{sync}-{round}.db");
                    await using var store = new SqliteStore(new SqliteStoreOptions { Path = path, Site = "Brackenmoor", SyncEveryCommit = sync }, TimeProvider.System);
                    await MeasureAsync($"store, sync every commit {sync}, round {round + 1}", count, async () =>
                    {
                        foreach (MonitorRecord[] batch in batches)
                        {
                            await store.WriteAsync(batch, CancellationToken.None);
                        }
                    });
                }
            }
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    private static void Measure(string name, int count, Func<Task> action) => MeasureAsync(name, count, action).GetAwaiter().GetResult();

    private static async Task MeasureAsync(string name, int count, Func<Task> action)
    {
        using Process self = Process.GetCurrentProcess();
        TimeSpan cpu0 = self.TotalProcessorTime;
        var wall = Stopwatch.StartNew();
        await action();
        wall.Stop();
        self.Refresh();
        TimeSpan cpu = self.TotalProcessorTime - cpu0;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{name}: {count:N0} records, wall {wall.Elapsed.TotalSeconds:F2} s ({count / wall.Elapsed.TotalSeconds:N0}/s), CPU {cpu.TotalSeconds:F2} s ({count / cpu.TotalSeconds:N0}/s of CPU)"));
    }
}

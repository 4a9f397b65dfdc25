using BenchmarkDotNet.Attributes;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Bench.Storage;

/// <summary>Target: the embedded store takes at least 200,000 records per second (batches of 10,000, one transaction each).</summary>
[MemoryDiagnoser]
[SimpleJob(launchCount: 1, warmupCount: 1, iterationCount: 5, invocationCount: 1)]
public class SqliteStoreBenchmarks
{
    private const int Records = 200_000;
    private const int Batch = 10_000;
    private List<MonitorRecord[]> _batches = [];
    private string _folder = string.Empty;
    private SqliteStore? _store;

    /// <summary>True syncs the log at every commit (the default: survives a power loss); false survives a process crash only.</summary>
    [Params(true, false)]
    public bool SyncEveryCommit { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _batches = [.. BenchRecords.Make(Records).Chunk(Batch)];
        _folder = Path.Combine(Path.GetTempPath(), "tieflow-bench-" + Guid.NewGuid().ToString("N")[..8]);
        Directory.CreateDirectory(_folder);
    }

    [IterationSetup]
    public void OpenStore() =>
        _store = new SqliteStore(new SqliteStoreOptions { Path = Path.Combine(_folder, Guid.NewGuid().ToString("N") + ".db"), Site = "Brackenmoor", SyncEveryCommit = SyncEveryCommit }, TimeProvider.System);

    [IterationCleanup]
    public void CloseStore() => _store!.DisposeAsync().AsTask().GetAwaiter().GetResult();

    [GlobalCleanup]
    public void Cleanup() => Directory.Delete(_folder, recursive: true);

    [Benchmark(OperationsPerInvoke = Records)]
    public async Task WriteRecords()
    {
        foreach (MonitorRecord[] batch in _batches)
        {
            await _store!.WriteAsync(batch, CancellationToken.None);
        }
    }
}

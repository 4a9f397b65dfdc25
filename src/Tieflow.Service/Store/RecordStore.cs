using Microsoft.Extensions.Logging;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Service.Settings;
using Tieflow.Storage;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Store;

/// <summary>
/// The configured store of a run: the embedded SQLite store, or the InfluxDB kind as a durable outbox with its
/// forwarder (the write is acknowledged once the outbox has it; the forwarder sends it on). Counts what it wrote and
/// keeps the last failure for the health check.
/// </summary>
internal sealed class RecordStore : IAsyncDisposable
{
    private readonly IRecordSink _sink;
    private readonly Outbox? _outbox;
    private readonly OutboxForwarder? _forwarder;
    private readonly InfluxLineWriter? _writer;
    private readonly TimeProvider _time;
    private readonly Lock _gate = new();
    private CancellationTokenSource? _forwarding;
    private Task? _forwarderTask;
    private long _written;
    private DateTimeOffset? _lastWrite;
    private string? _lastError;

    private RecordStore(string kind, string target, IRecordSink sink, TimeProvider time, Outbox? outbox = null, OutboxForwarder? forwarder = null, InfluxLineWriter? writer = null)
    {
        Kind = kind;
        Target = target;
        _sink = sink;
        _time = time;
        _outbox = outbox;
        _forwarder = forwarder;
        _writer = writer;
    }

    public string Kind { get; }

    /// <summary>The file or the server URL (never a token).</summary>
    public string Target { get; }

    /// <summary>Opens the store the settings name; the InfluxDB forwarder starts with <see cref="Start"/>.</summary>
    public static RecordStore Open(StoreOptions options, string site, SettingsContext settings, TimeProvider time, ILoggerFactory loggerFactory)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(settings);
        if (options.Kind == StoreOptions.InfluxDb)
        {
            string outboxPath = settings.Resolve(options.OutboxPath!);
            CreateFolderOf(outboxPath);
            var outbox = new Outbox(new OutboxOptions { Path = outboxPath, Site = site, MaxBytes = options.OutboxMaxBytes ?? 256L * 1024 * 1024 });
            var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = options.Url!, Org = options.Org!, Bucket = options.Bucket!, Token = settings.Secret(StoreOptions.TokenVariable) ?? string.Empty, Gzip = options.Gzip });
            var forwarder = new OutboxForwarder(outbox, writer, new OutboxForwarderOptions(), time, loggerFactory);
            return new RecordStore(StoreOptions.InfluxDb, $"{options.Url} (org {options.Org}, bucket {options.Bucket}{(options.Gzip ? string.Empty : ", no gzip")}; outbox {outboxPath})", new OutboxSink(outbox), time, outbox, forwarder, writer);
        }

        string path = options.Path is null ? Path.GetFullPath(StoreOptions.DefaultPath, settings.WorkingDirectory) : settings.Resolve(options.Path);
        CreateFolderOf(path);
        return new RecordStore(StoreOptions.Sqlite, path, new SqliteStore(new SqliteStoreOptions { Path = path, Site = site }, time), time);
    }

    /// <summary>Starts forwarding (InfluxDB kind); nothing for the embedded store.</summary>
    public void Start()
    {
        if (_forwarder is null)
        {
            return;
        }

        _forwarding = new CancellationTokenSource();
        _forwarderTask = _forwarder.RunAsync(_forwarding.Token);
    }

    /// <summary>Writes a batch; returns once it is acknowledged. Throws when it could not be (the failure is kept for the health check).</summary>
    public async Task WriteAsync(IReadOnlyList<MonitorRecord> batch, CancellationToken cancellationToken)
    {
        try
        {
            await _sink.WriteAsync(batch, cancellationToken).ConfigureAwait(false);
            lock (_gate)
            {
                _written += batch.Count;
                _lastWrite = _time.GetUtcNow();
                _lastError = null;
            }
        }
        catch (Exception e) when (e is not OperationCanceledException)
        {
            lock (_gate)
            {
                _lastError = e.Message;
            }

            throw;
        }
    }

    /// <summary>Brings what was acknowledged as far as the store takes it, waiting at most <paramref name="timeout"/> (the outbox keeps the rest).</summary>
    public async Task<bool> FlushAsync(TimeSpan timeout, CancellationToken cancellationToken)
    {
        using var limit = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        limit.CancelAfter(timeout);
        try
        {
            await _sink.FlushAsync(limit.Token).ConfigureAwait(false);
            return true;
        }
        catch (OperationCanceledException) when (!cancellationToken.IsCancellationRequested)
        {
            return false;
        }
    }

    public StoreState State()
    {
        lock (_gate)
        {
            return new StoreState(Kind, Target, _written, _lastWrite, _lastError,
                _outbox?.PendingRecords ?? 0, _outbox?.PendingBytes ?? 0, _outbox?.MaxBytes ?? 0, _outbox?.State, _forwarder?.State, _forwarder?.LastError);
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (_forwarding is not null)
        {
            await _forwarding.CancelAsync().ConfigureAwait(false);
            try
            {
                await _forwarderTask!.ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                // Stopping: what was not forwarded stays in the outbox for the next start.
            }

            _forwarding.Dispose();
        }

        await _sink.DisposeAsync().ConfigureAwait(false);
        _outbox?.Dispose();
        _writer?.Dispose();
    }

    private static void CreateFolderOf(string path)
    {
        if (Path.GetDirectoryName(path) is { Length: > 0 } folder)
        {
            Directory.CreateDirectory(folder);
        }
    }
}

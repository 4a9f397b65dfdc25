using System.Threading.Channels;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.Service.Cli;
using Tieflow.Service.Settings;
using Tieflow.Service.Sources;
using Tieflow.Service.Store;
using Tieflow.Storage.Points;

namespace Tieflow.Service.Monitor;

/// <summary>
/// The live monitor: reads what the sources deliver through one channel, feeds the <see cref="PlantAnalysis"/>, writes
/// the records to the store and publishes its <see cref="MonitorStatus"/>. Start-up (plant, store, sources) happens in
/// <see cref="StartAsync"/>, so that a bad file stops the host before it runs (on .NET 10 <c>ExecuteAsync</c> runs on a
/// background thread). On stop it stops the sources, analyses what has already arrived, closes every window complete by
/// the last data time, writes, flushes and closes the store.
/// </summary>
internal sealed class MonitorService : BackgroundService
{
    private const int ChannelCapacity = 20_000;
    private const int BatchLimit = 5_000;
    private static readonly TimeSpan FlushTimeout = TimeSpan.FromSeconds(10);
    private static readonly TimeSpan StatusInterval = TimeSpan.FromMilliseconds(250);
    private static readonly TimeSpan QuietStatusInterval = TimeSpan.FromSeconds(1);
    private static readonly TimeSpan StoreRetryDelay = TimeSpan.FromSeconds(1);

    private readonly IOptions<TieflowOptions> _options;
    private readonly IOptions<SourceOptions> _source;
    private readonly IOptions<LabsOptions> _labs;
    private readonly IOptions<StoreOptions> _store;
    private readonly SettingsContext _settings;
    private readonly SignalSources _sources;
    private readonly MonitorStatus _status;
    private readonly RunOutcome _outcome;
    private readonly IHostApplicationLifetime _lifetime;
    private readonly TimeProvider _time;
    private readonly ILoggerFactory _loggerFactory;
    private readonly ILogger _logger;
    private readonly List<MonitorRecord> _pending = [];
    private readonly List<MonitorRecord> _produced = new(256);
    private readonly HashSet<string> _reportedUnknown = new(StringComparer.Ordinal);
    private readonly Dictionary<string, UnitLatest> _latest = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string> _unitOfTag = new(StringComparer.Ordinal);
    private PlantDescription? _plant;
    private PlantAnalysis? _analysis;
    private RecordStore? _recordStore;
    private IReadOnlyList<(ISignalSource Source, bool Primary)> _running = [];
    private SourceStatus[] _sourceStates = [];
    private long _records;
    private long _lastStatus;
    private bool _storeFailing;
    private long _storeRetryAt;
    private string _phase = "starting";
    private string? _failure;

    public MonitorService(
        IOptions<TieflowOptions> options,
        IOptions<SourceOptions> source,
        IOptions<LabsOptions> labs,
        IOptions<StoreOptions> store,
        SettingsContext settings,
        SignalSources sources,
        MonitorStatus status,
        RunOutcome outcome,
        IHostApplicationLifetime lifetime,
        TimeProvider time,
        ILoggerFactory loggerFactory)
    {
        _options = options;
        _source = source;
        _labs = labs;
        _store = store;
        _settings = settings;
        _sources = sources;
        _status = status;
        _outcome = outcome;
        _lifetime = lifetime;
        _time = time;
        _loggerFactory = loggerFactory;
        _logger = loggerFactory.CreateLogger("Tieflow.Monitor");
    }

    /// <summary>The store of this run (after start), for tests.</summary>
    public RecordStore? Store => _recordStore;

    public override async Task StartAsync(CancellationToken cancellationToken)
    {
        try
        {
            _plant = PlantSelection.Load(_options.Value, _source.Value, _settings);
            _analysis = new PlantAnalysis(_plant);
            foreach (UnitDescription u in _plant.Units)
            {
                foreach (Instrument i in u.Instruments)
                {
                    _unitOfTag[i.Tag] = u.Id;
                }
            }

            var context = new SourceContext(_source.Value, _labs.Value, _plant, _settings, _time, _loggerFactory);
            var primary = _sources.Create(context);
            _recordStore = RecordStore.Open(_store.Value, _plant.Site, _settings, _time, _loggerFactory);
            _running = primary;
            _sourceStates = [.. _running.Select(s => new SourceStatus(s.Source.Name, s.Primary, SourceState.Connecting, null, null))];
            LogSettings();
            Log.Starting(_logger, _plant.Site, string.Join(", ", _plant.Units.Select(u => u.Id)), string.Join(" + ", _running.Select(s => s.Source.Name)), _recordStore.Kind, _recordStore.Target);
            Log.Advisory(_logger, Output.Notices.Advisory);
            _recordStore.Start();
            _phase = "running";
            Publish(force: true);
        }
        catch (InputException e)
        {
            _outcome.Fail(ExitCodes.BadInput, string.Join(Environment.NewLine, e.Problems.Select(p => $"error: {p}")));
            throw;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or Microsoft.Data.Sqlite.SqliteException)
        {
            // The store's file cannot be opened: a runtime failure of the machine, not of the settings.
            _outcome.Fail(ExitCodes.RuntimeFailure, $"failed: {e.Message}");
            throw;
        }

        await base.StartAsync(cancellationToken).ConfigureAwait(false);
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var channel = Channel.CreateBounded<(int Source, SourceEvent Event)>(new BoundedChannelOptions(ChannelCapacity) { SingleReader = true, FullMode = BoundedChannelFullMode.Wait });
        using var sourcesStop = new CancellationTokenSource();
        Task[] sourceTasks = [.. _running.Select((s, i) => RunSourceAsync(i, s.Source, channel.Writer, sourcesStop.Token))];
        Task allEnded = Task.WhenAll(sourceTasks).ContinueWith(_ => channel.Writer.TryComplete(), CancellationToken.None, TaskContinuationOptions.ExecuteSynchronously, TaskScheduler.Default);
        bool sourcesEnded = false;
        try
        {
            sourcesEnded = await ReadAsync(channel.Reader, stoppingToken).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Stop requested: fall through to finishing.
        }
        catch (Exception e)
        {
            // A defect in the analysis or a store that cannot be written: the host must stop with a runtime failure.
            _failure = e.Message;
            _outcome.Fail(ExitCodes.RuntimeFailure, $"failed: {e.Message}");
            Log.MonitorFailed(_logger, e.Message);
        }

        _phase = "stopping";
        Log.Stopping(_logger);
        await sourcesStop.CancelAsync().ConfigureAwait(false);

        // What the sources delivered before they stopped is analysed too. Reading on while they stop also keeps a
        // full channel from holding a source back (the channel completes once every source has ended).
        await foreach (var item in channel.Reader.ReadAllAsync(CancellationToken.None).ConfigureAwait(false))
        {
            Handle(item.Source, item.Event);
        }

        await allEnded.ConfigureAwait(false);

        await FinishAsync().ConfigureAwait(false);
        if (sourcesEnded && !stoppingToken.IsCancellationRequested)
        {
            Log.SourcesEnded(_logger);
            _lifetime.StopApplication();
        }
        else if (_failure is not null)
        {
            _lifetime.StopApplication();
        }
    }

    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        await base.StopAsync(cancellationToken).ConfigureAwait(false);
        if (_recordStore is not null)
        {
            await _recordStore.DisposeAsync().ConfigureAwait(false);
            _recordStore = null;
        }
    }

    /// <summary>Reads until the sources have all ended (true) or the stop token fires (throws).</summary>
    private async Task<bool> ReadAsync(ChannelReader<(int Source, SourceEvent Event)> reader, CancellationToken stoppingToken)
    {
        bool stale = false;
        while (true)
        {
            ValueTask<bool> next = reader.WaitToReadAsync(stoppingToken);
            bool more;
            if (!next.IsCompleted)
            {
                // Nothing more arrives for now: publish what the last batch changed once the status interval is up,
                // and the store's state (an outbox draining, a forwarder failing) every second while all is quiet.
                Task<bool> waiting = next.AsTask();
                using var delay = CancellationTokenSource.CreateLinkedTokenSource(stoppingToken);
                if (await Task.WhenAny(waiting, Task.Delay(stale ? StatusInterval : QuietStatusInterval, _time, delay.Token)).ConfigureAwait(false) != waiting)
                {
                    Publish(force: true);
                    stale = false;
                }

                await delay.CancelAsync().ConfigureAwait(false);
                more = await waiting.ConfigureAwait(false);
            }
            else
            {
                more = await next.ConfigureAwait(false);
            }

            if (!more)
            {
                return true;
            }

            int n = 0;
            while (n < BatchLimit && reader.TryRead(out var item))
            {
                Handle(item.Source, item.Event);
                n++;
            }

            await WritePendingAsync(stoppingToken).ConfigureAwait(false);
            stale = !Publish(force: false);
        }
    }

    private void Handle(int source, SourceEvent e)
    {
        PlantAnalysis analysis = _analysis!;
        switch (e)
        {
            case SampleArrived { Sample: var s }:
                analysis.Add(s, _produced);
                if (_unitOfTag.TryGetValue(s.Tag, out string? unit))
                {
                    if (_store.Value.WriteSignals)
                    {
                        _produced.Add(new SignalRecord(unit, s.Time, s.Tag, s.Value, s.Quality));
                    }
                }
                else if (_reportedUnknown.Add(s.Tag))
                {
                    Log.UnknownTag(_logger, s.Tag);
                }

                break;
            case LabArrived { Lab: var lab }:
                analysis.AddLab(lab, _produced);
                break;
            case SourceStateChanged change:
                SourceStatus before = _sourceStates[source];
                _sourceStates[source] = before with { State = change.State, Since = change.Time, Reason = change.Reason };
                if (change.State == SourceState.Connected)
                {
                    Log.SourceConnected(_logger, before.Name, change.Time, change.Reason);
                    if (before.Primary)
                    {
                        analysis.SourceResumed(change.Time, _produced);
                    }
                }
                else if (change.State == SourceState.Disconnected)
                {
                    Log.SourceLost(_logger, before.Name, change.Time, change.Reason);
                    if (before.Primary)
                    {
                        analysis.SourceLost(change.Time, change.Reason ?? "connection lost", _produced);
                    }
                }

                break;
        }

        if (_produced.Count > 0)
        {
            Take(_produced);
            _produced.Clear();
        }
    }

    private void Take(List<MonitorRecord> records)
    {
        foreach (MonitorRecord r in records)
        {
            switch (r)
            {
                case AlertRecord a when a.Active:
                    Log.AlertRaised(_logger, a.Unit, a.Kind, RecordPoints.SeverityName(a.Severity), a.Time, a.Message);
                    break;
                case AlertRecord a:
                    Log.AlertCleared(_logger, a.Unit, a.Kind, a.Time);
                    break;
                case StageRecord st:
                    Latest(st.Unit, st.Time).Stages[st.Stage] = new StageStatus(st.Stage, st.Efficiency?.Value, st.Efficiency?.Sigma);
                    break;
                case SoftSensorRecord ss:
                    Latest(ss.Unit, ss.Time).SoftSensor = new SoftSensorStatus(ss.Sensor, ss.Time, ss.Value, ss.Sigma, ss.LabBias);
                    break;
            }
        }

        _pending.AddRange(records);
        _records += records.Count;
    }

    /// <summary>The latest results of a unit, moved on to the window at <paramref name="time"/>.</summary>
    private UnitLatest Latest(string unit, DateTimeOffset time)
    {
        if (!_latest.TryGetValue(unit, out UnitLatest? latest))
        {
            latest = new UnitLatest();
            _latest[unit] = latest;
        }

        if (latest.Window is null || time > latest.Window.Value)
        {
            latest.Window = time;
        }

        return latest;
    }

    private async Task WritePendingAsync(CancellationToken cancellationToken)
    {
        if (_pending.Count == 0 || (_storeFailing && _time.GetTimestamp() < _storeRetryAt))
        {
            return;
        }

        try
        {
            await _recordStore!.WriteAsync(_pending, cancellationToken).ConfigureAwait(false);
            _pending.Clear();
            if (_storeFailing)
            {
                _storeFailing = false;
                Log.StoreRecovered(_logger, _recordStore.Kind);
            }
        }
        catch (Exception e) when (e is not OperationCanceledException)
        {
            // The records stay pending and are written again: a store outage must not lose them.
            if (!_storeFailing)
            {
                Log.StoreWriteFailed(_logger, _recordStore!.Kind, _pending.Count, e.Message);
            }

            _storeFailing = true;
            _storeRetryAt = _time.GetTimestamp() + (long)(StoreRetryDelay.TotalSeconds * _time.TimestampFrequency);
        }
    }

    private async Task FinishAsync()
    {
        PlantAnalysis analysis = _analysis!;
        if (analysis.LastTime is DateTimeOffset last)
        {
            analysis.Advance(last, _produced);
            Take(_produced);
            _produced.Clear();
        }

        if (_pending.Count > 0)
        {
            _storeFailing = false;
            try
            {
                await _recordStore!.WriteAsync(_pending, CancellationToken.None).ConfigureAwait(false);
                _pending.Clear();
            }
            catch (Exception e)
            {
                // Last attempt at stop; the records could not be kept, which the log and the exit code say.
                Log.StoreWriteFailed(_logger, _recordStore!.Kind, _pending.Count, e.Message);
                _outcome.Fail(ExitCodes.RuntimeFailure, $"failed: {_pending.Count} records could not be written at stop: {e.Message}");
            }
        }

        if (!await _recordStore!.FlushAsync(FlushTimeout, CancellationToken.None).ConfigureAwait(false))
        {
            Log.FlushIncomplete(_logger, FlushTimeout, _recordStore.State().PendingRecords);
        }

        _phase = _failure is null ? "stopped" : "failed";
        Publish(force: true);
        Log.Stopped(_logger, analysis.Samples, analysis.Units.Sum(u => u.Summary().Windows), _records, analysis.LastTime);
    }

    private async Task RunSourceAsync(int index, ISignalSource source, ChannelWriter<(int, SourceEvent)> output, CancellationToken cancellationToken)
    {
        await Task.Yield();
        var own = Channel.CreateBounded<SourceEvent>(new BoundedChannelOptions(1024) { SingleReader = true, SingleWriter = true });
        Task pump = PumpAsync(index, own.Reader, output);
        try
        {
            await source.RunAsync(own.Writer, cancellationToken).ConfigureAwait(false);
            Log.SourceEnded(_logger, source.Name);
        }
        catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
        {
            // Stopping.
        }
        catch (Exception e)
        {
            // A source throws only for a configuration that can never work: the run ends.
            Log.SourceFailed(_logger, source.Name, e.Message);
            _outcome.Fail(e is InputException ? ExitCodes.BadInput : ExitCodes.RuntimeFailure, $"failed: source {source.Name}: {e.Message}");
            _failure = e.Message;
            _lifetime.StopApplication();
        }
        finally
        {
            own.Writer.TryComplete();
            await pump.ConfigureAwait(false);
        }
    }

    private static async Task PumpAsync(int index, ChannelReader<SourceEvent> reader, ChannelWriter<(int, SourceEvent)> output)
    {
        // Forwards everything the source wrote, even after a stop was asked for: the monitor analyses it before closing.
        await foreach (SourceEvent e in reader.ReadAllAsync(CancellationToken.None).ConfigureAwait(false))
        {
            await output.WriteAsync((index, e), CancellationToken.None).ConfigureAwait(false);
        }
    }

    /// <summary>Publishes the status, at most once per <see cref="StatusInterval"/> unless forced; false when it did not.</summary>
    private bool Publish(bool force)
    {
        long now = _time.GetTimestamp();
        if (!force && _time.GetElapsedTime(_lastStatus, now) < StatusInterval)
        {
            return false;
        }

        _lastStatus = now;
        PlantAnalysis? analysis = _analysis;
        var units = new List<UnitStatus>();
        if (analysis is not null)
        {
            foreach (UnitAnalyzer a in analysis.Units)
            {
                UnitDescription u = a.Model.Unit;
                UnitLatest? latest = _latest.GetValueOrDefault(u.Id);
                var stages = Enumerable.Range(1, u.Stages).Select(k => latest is not null && latest.Stages.TryGetValue(k, out StageStatus? s) ? s : new StageStatus(k, null, null)).ToList();
                var alerts = a.Alerts.Active.Select(e => new ActiveAlert(e.Key.Kind, RecordPoints.SeverityName(e.Severity), e.Key.Stage, e.Key.Tag, e.Raised, e.Message)).ToList();
                if (analysis.InGap && _sourceStates.FirstOrDefault(s => s.Primary) is { Since: DateTimeOffset since, Reason: var reason })
                {
                    alerts.Add(new ActiveAlert(PlantAnalysis.SourceGapKind, "medium", null, null, since, $"the data source is lost ({reason})"));
                }

                units.Add(new UnitStatus(u.Id, latest?.Window, a.Summary().Windows, stages, latest?.SoftSensor, u.RaffinateSoluteSpec, alerts));
            }
        }

        _status.Publish(new StatusSnapshot(_plant?.Site ?? string.Empty, _phase, analysis?.LastTime, [.. _sourceStates], _recordStore?.State(), units, analysis?.Samples ?? 0, _records, _failure));
        return true;
    }

    private void LogSettings()
    {
        SourceOptions s = _source.Value;
        string target = s.Kind == SourceOptions.OpcUa ? s.Endpoint ?? "?" : s.Scenario ?? "?";
        string password = _settings.Secret(SourceOptionsValidator.PasswordVariable) is null ? "not set" : "set (not shown)";
        string token = _settings.Secret(StoreOptions.TokenVariable) is null ? "not set" : "set (not shown)";
        Log.Settings(_logger, s.Kind ?? "?", target, s.User ?? "(anonymous)", password, _store.Value.Kind, token, _labs.Value.Folder ?? "(none)");
    }

    /// <summary>A unit's results as the records of its windows arrive.</summary>
    private sealed class UnitLatest
    {
        public DateTimeOffset? Window { get; set; }

        public Dictionary<int, StageStatus> Stages { get; } = [];

        public SoftSensorStatus? SoftSensor { get; set; }
    }
}

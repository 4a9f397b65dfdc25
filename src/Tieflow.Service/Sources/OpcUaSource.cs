using System.Globalization;
using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Logging.Abstractions;
using Polly;
using Polly.Retry;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.Service.Cli;
using Tieflow.Service.Hosting;

namespace Tieflow.Service.Sources;

/// <summary>
/// Samples of every instrument of a plant from its OPC UA server, through Tieflow's own client: one subscription with a
/// monitored item per instrument (keyed by tag), values as the server sends them, which are readings in the
/// instrument's engineering unit, exactly what a history CSV holds (the analysis converts both to the base unit with
/// <see cref="EngineeringUnit.ToBase"/>), quality from the status code's severity, and the source timestamp kept.
/// </summary>
/// <remarks>
/// <para>The first connection is made through a retry pipeline (exponential backoff on the injected clock); refusals
/// (identity, security, an untrusted certificate) and a server that has none of the plant's nodes stop the source with
/// a <see cref="SignalSourceException"/>. After that the client heals the connection by itself; each loss is reported
/// as <see cref="SourceState.Disconnected"/> with the source time of the last sample before it, and each resume as
/// <see cref="SourceState.Connected"/> with the source time of the first sample after it (Connected always means
/// "samples flow").</para>
/// <para>Instruments whose node the server does not have: listed in the reason of the first Connected event, in the
/// log and in <see cref="MissingTags"/>, and the others are watched (the source starts degraded), unless
/// <see cref="OpcUaSourceOptions.RequireAllNodes"/> is set. When none of the nodes exists the plant file does not
/// describe this server: exit 2.</para>
/// </remarks>
internal sealed partial class OpcUaSource : ISignalSource
{
    /// <summary>Events waiting in a connection's inbox beyond which the subscription's events are left in its own queue.</summary>
    private const int InboxHighWater = 10_000;

    private readonly PlantDescription _plant;
    private readonly OpcUaSourceOptions _options;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly Func<string, string?> _environment;
    private IReadOnlyList<string> _missing = [];

    /// <param name="plant">The plant whose instruments are watched.</param>
    /// <param name="options">The settings (checked when the source runs).</param>
    /// <param name="time">The clock of the retry delays and of the client's timeouts.</param>
    /// <param name="loggerFactory">Logging, or null for none.</param>
    /// <param name="environment">Reads environment variables (the password); null for the process environment.</param>
    public OpcUaSource(PlantDescription plant, OpcUaSourceOptions options, TimeProvider time, ILoggerFactory? loggerFactory = null, Func<string, string?>? environment = null)
    {
        ArgumentNullException.ThrowIfNull(plant);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(time);
        _plant = plant;
        _options = options;
        _time = time;
        _logger = (loggerFactory ?? NullLoggerFactory.Instance).CreateLogger<OpcUaSource>();
        _environment = environment ?? Environment.GetEnvironmentVariable;
    }

    public string Name => $"opcua {_options.Endpoint}";

    /// <summary>Tags whose node the server did not have at the last (re)subscription.</summary>
    public IReadOnlyList<string> MissingTags => Volatile.Read(ref _missing);

    public async Task RunAsync(ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(output);
        Prepared prepared = Prepare();
        await output.WriteAsync(new SourceStateChanged(SourceState.Connecting, _time.GetUtcNow(), $"connecting to {prepared.Endpoint}"), cancellationToken).ConfigureAwait(false);
        var state = new Tracking();
        while (!cancellationToken.IsCancellationRequested)
        {
            Connection? connection;
            try
            {
                connection = await ConnectAsync(prepared, output, cancellationToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
            {
                return;
            }

            await using (connection.ConfigureAwait(false))
            {
                await PumpAsync(connection, state, output, cancellationToken).ConfigureAwait(false);
            }
        }
    }

    /// <summary>Checks the settings and the plant's NodeIds, listing every problem with its key path (exit 2).</summary>
    private Prepared Prepare()
    {
        var problems = new List<string>(_options.Problems());
        UaUserIdentity identity = UaUserIdentity.Anonymous;
        if (!string.IsNullOrWhiteSpace(_options.User))
        {
            string? password = _environment(SettingsKeys.OpcUaPasswordVariable);
            if (string.IsNullOrEmpty(password))
            {
                problems.Add($"{SettingsKeys.SourceUser}: user '{_options.User}' needs the password in the environment variable {SettingsKeys.OpcUaPasswordVariable}");
            }
            else
            {
                identity = UaUserIdentity.FromUserName(_options.User, password);
            }
        }

        var nodes = new List<MonitoredNode>();
        foreach (Instrument i in _plant.Units.SelectMany(u => u.Instruments))
        {
            try
            {
                nodes.Add(new MonitoredNode
                {
                    Node = ExpandedNodeId.Parse(i.Node),
                    Key = i.Tag,
                    SamplingInterval = _options.SamplingInterval,
                    QueueSize = QueueSize(),
                });
            }
            catch (FormatException e)
            {
                problems.Add($"{SettingsKeys.Plant}: instrument {i.Tag}: node \"{i.Node}\" is not a NodeId ({e.Message}); expected e.g. ns=2;s=X300.FI301.PV");
            }
        }

        if (nodes.Count == 0 && problems.Count == 0)
        {
            problems.Add($"{SettingsKeys.Plant}: the plant has no instruments to watch");
        }

        if (problems.Count > 0)
        {
            throw new SignalSourceException(ExitCodes.BadInput, "the OPC UA source cannot start:" + Environment.NewLine + string.Join(Environment.NewLine, problems.Select(p => "  " + p)));
        }

        var endpoint = new Uri(_options.Endpoint!);
        UaSecurity? security = _options.Security is null ? null : UaSecurity.Parse(_options.Security);
        return new Prepared(new UaSession.SessionSettings(endpoint, identity, security, UaSession.Store(_options.Pki)), nodes);
    }

    private uint QueueSize() =>
        (uint)Math.Clamp(Math.Ceiling(_options.PublishingInterval / _options.SamplingInterval) + 1, 1, 1000);

    /// <summary>The first connection and the subscription, retried with backoff while the failure may go away by itself.</summary>
    private async Task<Connection> ConnectAsync(Prepared prepared, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        int attempts = 0;
        var builder = new ResiliencePipelineBuilder { TimeProvider = _time, Name = "tieflow-opcua-connect" };
        if (_options.ConnectAttempts != 1)
        {
            builder.AddRetry(new RetryStrategyOptions
            {
                ShouldHandle = new PredicateBuilder().Handle<Exception>(e => e is not SignalSourceException && !(e is OperationCanceledException && cancellationToken.IsCancellationRequested)),
                MaxRetryAttempts = _options.ConnectAttempts == 0 ? int.MaxValue : _options.ConnectAttempts - 1,
                Delay = _options.ConnectRetryDelay,
                MaxDelay = _options.ConnectRetryMaxDelay,
                BackoffType = DelayBackoffType.Exponential,
                UseJitter = false,
                OnRetry = async args =>
                {
                    string why = Describe(args.Outcome.Exception);
                    LogConnectFailed(_logger, prepared.Endpoint, args.AttemptNumber + 1, args.RetryDelay, why);
                    await output.WriteAsync(new SourceStateChanged(SourceState.Connecting, _time.GetUtcNow(),
                        $"attempt {args.AttemptNumber + 1} to connect to {prepared.Endpoint} failed ({why}); next attempt in {args.RetryDelay}"), cancellationToken).ConfigureAwait(false);
                },
            });
        }

        ResiliencePipeline pipeline = builder.Build();
        try
        {
            return await pipeline.ExecuteAsync(
                async token =>
                {
                    attempts++;
                    return await AttemptAsync(prepared, token).ConfigureAwait(false);
                },
                cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (e is not SignalSourceException && !(e is OperationCanceledException && cancellationToken.IsCancellationRequested))
        {
            throw new SignalSourceException(ExitCodes.RuntimeFailure,
                $"{prepared.Endpoint} is unreachable after {attempts} attempt(s) ({SettingsKeys.SourceConnectAttempts} is {_options.ConnectAttempts}): {Describe(e)}", e);
        }
    }

    /// <summary>One attempt: connect, subscribe to every instrument, check that the server has their nodes.</summary>
    private async ValueTask<Connection> AttemptAsync(Prepared prepared, CancellationToken cancellationToken)
    {
        UaSession.SessionSettings settings = prepared.Settings;
        var client = new UaClient(
            new UaClientOptions
            {
                EndpointUrl = settings.Endpoint,
                Identity = settings.Identity,
                Security = settings.Security,
                CertificateStore = settings.Store,
                SessionName = $"Tieflow monitor ({_plant.Site})",
            },
            _time);
        var connection = new Connection(client);
        client.StateChanged += (_, change) => connection.Inbox.Writer.TryWrite(change);
        try
        {
            await client.ConnectAsync(cancellationToken).ConfigureAwait(false);
            UaSubscription subscription = await client.SubscribeAsync(new SubscriptionSettings
            {
                PublishingInterval = _options.PublishingInterval,
                MaxKeepAliveCount = (uint)Math.Clamp(Math.Ceiling(_options.KeepAliveInterval / _options.PublishingInterval), 1, 10_000),
                Timestamps = TimestampsToReturn.Both,
            }, prepared.Nodes, cancellationToken).ConfigureAwait(false);
            connection.Subscription = subscription;
            if (CheckNodes(prepared, subscription) is { } degraded)
            {
                connection.Notes.Add(degraded);
            }

            if (settings.Security is null && client.Security?.Mode == MessageSecurityMode.None)
            {
                connection.Notes.Add($"{settings.Endpoint} offers no secured endpoint that Tieflow supports; connected without security");
            }

            return connection;
        }
        catch (UaCertificateException e)
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw new SignalSourceException(ExitCodes.RuntimeFailure, UaSession.CertificateMessage(settings, e), e);
        }
        catch (InvalidOperationException e) when (settings.Store is not null && e.Message.Contains(settings.Store.Root, StringComparison.Ordinal))
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw new SignalSourceException(ExitCodes.RuntimeFailure, $"the certificate store ({SettingsKeys.SourcePki}) cannot be used: {e.Message}", e);
        }
        catch (ServiceResultException e) when (UaSession.IsRefusal(e.Status))
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw new SignalSourceException(ExitCodes.RuntimeFailure, $"{settings.Endpoint} refused the session: {e.Message}", e);
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    /// <summary>Fails when the plant does not fit the server; otherwise the note that the source runs degraded, or null.</summary>
    private string? CheckNodes(Prepared prepared, UaSubscription subscription)
    {
        Dictionary<string, string> nodeOf = prepared.Nodes.ToDictionary(n => n.Key!, n => n.Node.ToString(), StringComparer.Ordinal);
        List<MonitoredNodeResult> failed = [.. subscription.Items.Where(i => i.Status.IsBad)];
        Volatile.Write(ref _missing, failed.Select(f => f.Key).ToArray());
        if (failed.Count == 0)
        {
            return null;
        }

        string list = string.Join(", ", failed.Select(f => $"{f.Key} ({nodeOf[f.Key]}: {f.Status})"));
        if (failed.Count == subscription.Items.Count || _options.RequireAllNodes)
        {
            string why = failed.Count == subscription.Items.Count
                ? "none of the plant's instrument nodes can be watched on this server: the plant file does not describe it"
                : $"{failed.Count} of {subscription.Items.Count} instrument nodes cannot be watched and {SettingsKeys.SourceRequireAllNodes} is true";
            throw new SignalSourceException(ExitCodes.BadInput, $"{prepared.Endpoint}: {why}; {list}. Check the nodes in the plant file ({SettingsKeys.Plant}) with `tieflow ua browse --endpoint {prepared.Endpoint}`.");
        }

        LogMissingNodes(_logger, prepared.Endpoint, failed.Count, subscription.Items.Count, list);
        return $"degraded: {failed.Count} of {subscription.Items.Count} instruments have no node on the server and are not watched: {list}";
    }

    /// <summary>Turns what the client reports into source events, in order, until the connection ends or the source is stopped.</summary>
    private async Task PumpAsync(Connection connection, Tracking state, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        UaSubscription subscription = connection.Subscription!;
        Task forwarding = ForwardAsync(subscription, connection.Inbox, connection.Stopping.Token);
        state.ClientConnected = true;
        state.Notes.AddRange(connection.Notes);

        try
        {
            await foreach (object item in connection.Inbox.Reader.ReadAllAsync(cancellationToken).ConfigureAwait(false))
            {
                switch (item)
                {
                    case UaDataChange change:
                        SignalSample sample = ToSample(change, _time.GetUtcNow());
                        if (!state.Reported && state.ClientConnected)
                        {
                            await ReportConnectedAsync(state, sample, output, cancellationToken).ConfigureAwait(false);
                        }

                        state.LastSample = state.LastSample is { } last && last > sample.Time ? last : sample.Time;
                        await output.WriteAsync(new SampleArrived(sample), cancellationToken).ConfigureAwait(false);
                        break;
                    case UaConnectionStateChange { State: UaConnectionState.Reconnecting } change:
                        state.ClientConnected = false;
                        await ReportLostAsync(state, change.Message, output, cancellationToken).ConfigureAwait(false);
                        break;
                    case UaConnectionStateChange { State: UaConnectionState.Connected }:
                        state.ClientConnected = true;
                        break;
                    case UaDataGap gap:
                        if (gap.NotificationsMayBeMissing)
                        {
                            // Also without a lost connection (a recreated subscription, a reader that fell behind): samples are missing.
                            await ReportLostAsync(state, gap.Reason, output, cancellationToken).ConfigureAwait(false);
                        }

                        state.Notes.Add(string.Create(CultureInfo.InvariantCulture, $"client gap {Time(gap.From)} to {Time(gap.To)}: {gap.Reason}"));
                        break;
                    case Ended:
                        // The subscription's events completed without a stop: the client was closed; connect afresh.
                        await ReportLostAsync(state, "the OPC UA client closed the subscription", output, cancellationToken).ConfigureAwait(false);
                        return;
                }
            }
        }
        catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
        {
            // Stopped as asked.
        }
        finally
        {
            await connection.Stopping.CancelAsync().ConfigureAwait(false);
            connection.Inbox.Writer.TryComplete();
            await forwarding.ConfigureAwait(false);
        }
    }

    private async Task ReportConnectedAsync(Tracking state, SignalSample first, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        string reason = state.LostAt is { } lost
            ? $"samples flow again; first sample after the gap at {Time(first.Time)}, last before it at {(state.LastSample is { } l ? Time(l) : "none")} (lost at {Time(lost)} by the client's clock)"
            : $"samples flow; first sample at {Time(first.Time)}";
        if (state.Notes.Count > 0)
        {
            reason += "; " + string.Join("; ", state.Notes);
        }

        state.Notes.Clear();
        state.Reported = true;
        state.LostAt = null;
        state.LastSample = null;
        LogConnected(_logger, _options.Endpoint, reason);
        await output.WriteAsync(new SourceStateChanged(SourceState.Connected, first.Time, reason), cancellationToken).ConfigureAwait(false);
    }

    private async Task ReportLostAsync(Tracking state, string why, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        if (!state.Reported)
        {
            return;
        }

        DateTimeOffset now = _time.GetUtcNow();
        state.Reported = false;
        state.LostAt = now;
        string reason = $"{why}; last sample before the gap at {(state.LastSample is { } l ? Time(l) : "none")}";
        LogLost(_logger, _options.Endpoint, reason);
        await output.WriteAsync(new SourceStateChanged(SourceState.Disconnected, state.LastSample ?? now, reason), cancellationToken).ConfigureAwait(false);
    }

    /// <summary>
    /// A data change as a sample: the value unchanged (the instrument's engineering unit), the source timestamp (else
    /// the server's, else <paramref name="now"/>), and the quality from the status code's severity; a value that is not
    /// a finite number is bad.
    /// </summary>
    internal static SignalSample ToSample(UaDataChange change, DateTimeOffset now)
    {
        DateTimeOffset time = change.SourceTime != DateTime.MinValue ? new DateTimeOffset(DateTime.SpecifyKind(change.SourceTime, DateTimeKind.Utc))
            : change.ServerTime != DateTime.MinValue ? new DateTimeOffset(DateTime.SpecifyKind(change.ServerTime, DateTimeKind.Utc))
            : now;
        double value = double.NaN;
        bool numeric = !change.Value.IsArray && change.Value.TryGetDouble(out value);

        SignalQuality quality = change.Status.IsGood ? SignalQuality.Good : change.Status.IsUncertain ? SignalQuality.Uncertain : SignalQuality.Bad;

        // A reading that is not a finite number cannot be used, whatever status came with it.
        if (!numeric || !double.IsFinite(value))
        {
            quality = SignalQuality.Bad;
        }

        return new SignalSample(change.Key, time, value, quality);
    }

    /// <summary>
    /// Copies the subscription's events into the inbox, waiting while the inbox holds many: a monitor that falls behind
    /// then fills the subscription's own bounded queue, which drops the oldest and reports it as a gap. State changes
    /// of the client go into the inbox directly, so that they keep their place among the data.
    /// </summary>
    private static async Task ForwardAsync(UaSubscription subscription, Channel<object> inbox, CancellationToken stopping)
    {
        try
        {
            await foreach (UaSubscriptionEvent e in subscription.Events.ReadAllAsync(stopping).ConfigureAwait(false))
            {
                while (inbox.Reader.Count >= InboxHighWater)
                {
                    await Task.Delay(TimeSpan.FromMilliseconds(20), stopping).ConfigureAwait(false);
                }

                if (!inbox.Writer.TryWrite(e))
                {
                    return;
                }
            }
        }
        catch (OperationCanceledException) when (stopping.IsCancellationRequested)
        {
            // The pump has stopped.
        }
        finally
        {
            // However the events ended, the pump learns of it (after a stop the inbox is closed and this does nothing).
            inbox.Writer.TryWrite(Ended.Instance);
        }
    }

    private static string Describe(Exception? e) => e switch
    {
        null => "no exception",
        OperationCanceledException => "no answer before the timeout",
        _ => e.Message,
    };

    private static string Time(DateTimeOffset t) => t.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.FFF'Z'", CultureInfo.InvariantCulture);

    private static string Time(DateTime t) => Time(new DateTimeOffset(DateTime.SpecifyKind(t, DateTimeKind.Utc)));

    [LoggerMessage(EventId = 4101, Level = LogLevel.Warning, Message = "Attempt {Attempt} to connect to {Endpoint} failed ({Error}); next attempt in {Delay}")]
    private static partial void LogConnectFailed(ILogger logger, string endpoint, int attempt, TimeSpan delay, string error);

    [LoggerMessage(EventId = 4102, Level = LogLevel.Information, Message = "OPC UA source {Endpoint}: {Reason}")]
    private static partial void LogConnected(ILogger logger, string? endpoint, string reason);

    [LoggerMessage(EventId = 4103, Level = LogLevel.Warning, Message = "OPC UA source {Endpoint} lost the plant: {Reason}")]
    private static partial void LogLost(ILogger logger, string? endpoint, string reason);

    [LoggerMessage(EventId = 4104, Level = LogLevel.Error, Message = "{Endpoint}: {Count} of {Total} instrument nodes cannot be watched, the others are: {Nodes}")]
    private static partial void LogMissingNodes(ILogger logger, string endpoint, int count, int total, string nodes);

    private sealed record Prepared(UaSession.SessionSettings Settings, IReadOnlyList<MonitoredNode> Nodes)
    {
        public string Endpoint => Settings.Endpoint.ToString();
    }

    /// <summary>What the source has told the monitor, across reconnections.</summary>
    private sealed class Tracking
    {
        public bool Reported { get; set; }

        public bool ClientConnected { get; set; }

        public DateTimeOffset? LastSample { get; set; }

        public DateTimeOffset? LostAt { get; set; }

        public List<string> Notes { get; } = [];
    }

    /// <summary>Marks the end of a subscription's events.</summary>
    private sealed class Ended
    {
        public static readonly Ended Instance = new();
    }

    /// <summary>A client, its subscription and one ordered inbox for both their reports.</summary>
    private sealed class Connection(UaClient client) : IAsyncDisposable
    {
        public UaClient Client { get; } = client;

        public UaSubscription? Subscription { get; set; }

        // Not SingleReader: that channel cannot count what waits in it, and the forwarder needs the count.
        public Channel<object> Inbox { get; } = Channel.CreateUnbounded<object>();

        public List<string> Notes { get; } = [];

        public CancellationTokenSource Stopping { get; } = new();

        public async ValueTask DisposeAsync()
        {
            Inbox.Writer.TryComplete();
            await Stopping.CancelAsync().ConfigureAwait(false);
            await Client.DisposeAsync().ConfigureAwait(false);
            Stopping.Dispose();
        }
    }
}

using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Logging.Abstractions;
using Polly;
using Polly.CircuitBreaker;
using Polly.Retry;
using Tieflow.Storage.Influx;

namespace Tieflow.Storage.Outbox;

/// <summary>
/// Drains the outbox into the time-series server: the oldest batch is sent through a resilience pipeline (retry with
/// exponential back-off inside a circuit breaker, on the injected clock) and removed only after the server accepted
/// it. A failed batch stays where it is and is tried again after a pause; on restart the forwarder starts with the
/// oldest point the file still holds.
/// </summary>
public sealed partial class OutboxForwarder
{
    private readonly Outbox _outbox;
    private readonly IInfluxLineWriter _writer;
    private readonly OutboxForwarderOptions _options;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly ResiliencePipeline _pipeline;
    private readonly Lock _gate = new();
    private CancellationTokenSource? _wake;
    private bool _pendingWake;
    private ForwarderState _state = ForwarderState.Idle;
    private long _forwarded;
    private long _failures;
    private string? _lastError;
    private DateTimeOffset? _lastSuccess;

    public OutboxForwarder(Outbox outbox, IInfluxLineWriter writer, OutboxForwarderOptions options, TimeProvider time, ILoggerFactory? loggerFactory = null)
    {
        ArgumentNullException.ThrowIfNull(outbox);
        ArgumentNullException.ThrowIfNull(writer);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(time);
        if (options.MaxInFlight is < 1 or > 8)
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.MaxInFlight, "MaxInFlight must lie in 1 to 8.");
        }

        _outbox = outbox;
        _writer = writer;
        _options = options;
        _time = time;
        loggerFactory ??= NullLoggerFactory.Instance;
        _logger = loggerFactory.CreateLogger<OutboxForwarder>();
        var handled = new PredicateBuilder().Handle<Exception>(e => e is not OperationCanceledException and not BrokenCircuitException);
        _pipeline = new ResiliencePipelineBuilder { TimeProvider = time, Name = "tieflow-outbox" }
            .AddRetry(new RetryStrategyOptions
            {
                ShouldHandle = handled,
                MaxRetryAttempts = options.RetryAttempts,
                Delay = options.RetryDelay,
                MaxDelay = options.MaxRetryDelay,
                BackoffType = DelayBackoffType.Exponential,
                UseJitter = true,
            })
            .AddCircuitBreaker(new CircuitBreakerStrategyOptions
            {
                ShouldHandle = handled,
                FailureRatio = options.FailureRatio,
                MinimumThroughput = options.MinimumThroughput,
                SamplingDuration = options.SamplingDuration,
                BreakDuration = options.BreakDuration,
                OnOpened = args =>
                {
                    LogCircuitOpened(_logger, args.BreakDuration);
                    SetState(ForwarderState.CircuitOpen);
                    return ValueTask.CompletedTask;
                },
                OnClosed = _ =>
                {
                    LogCircuitClosed(_logger);
                    return ValueTask.CompletedTask;
                },
            })
            .ConfigureTelemetry(loggerFactory)
            .Build();
        outbox.Appended += Wake;
    }

    /// <summary>Raised when <see cref="State"/> changes.</summary>
    public event Action<ForwarderState>? StateChanged;

    /// <summary>Raised after each batch the server accepted, with its size.</summary>
    public event Action<int>? BatchForwarded;

    public ForwarderState State { get { lock (_gate) { return _state; } } }

    /// <summary>Points forwarded since start.</summary>
    public long Forwarded => Interlocked.Read(ref _forwarded);

    /// <summary>Attempts that failed after their retries, since start.</summary>
    public long Failures => Interlocked.Read(ref _failures);

    /// <summary>The last failure's message (no secrets: the client's message names the address, never the token), or null.</summary>
    public string? LastError { get { lock (_gate) { return _lastError; } } }

    /// <summary>Clock time of the last accepted batch, or null.</summary>
    public DateTimeOffset? LastSuccess { get { lock (_gate) { return _lastSuccess; } } }

    /// <summary>Forwards until cancelled; returns then (what is left stays in the outbox).</summary>
    /// <remarks>
    /// Up to <see cref="OutboxForwarderOptions.MaxInFlight"/> requests are in flight at a time, each a batch in the
    /// outbox's order. The oldest is awaited first; once it is accepted its points are removed from the outbox while
    /// the later requests are still on their way, so the local commit overlaps the network. After a failure the
    /// requests still in flight are awaited and the forwarder starts again from the oldest point still held, leaving
    /// out the later batches the server took meanwhile: they stay in the outbox until everything before them is
    /// accepted, but are not sent again (a server without overwrite by key, such as victoria-metrics, would keep them
    /// twice). Only a batch whose outcome is unknown (a lost response, a crash) is sent again; its points have the
    /// same keys, so InfluxDB overwrites them.
    /// </remarks>
    public async Task RunAsync(CancellationToken cancellationToken)
    {
        int limit = _options.MaxInFlight;
        long after = long.MinValue;
        var inFlight = new Queue<(long FirstId, long LastId, int Count, Task Send)>(limit);

        // Batches the server accepted after an earlier one failed: held until that one is accepted, never sent again.
        var taken = new List<(long FirstId, long LastId)>();
        try
        {
            while (!cancellationToken.IsCancellationRequested)
            {
                while (inFlight.Count < limit)
                {
                    IReadOnlyList<OutboxEntry> batch = _outbox.Peek(_options.BatchSize, after);
                    if (batch.Count == 0)
                    {
                        break;
                    }

                    var lines = new List<string>(batch.Count);
                    foreach (OutboxEntry entry in batch)
                    {
                        if (!Taken(taken, entry.Id))
                        {
                            lines.Add(entry.Line);
                        }
                    }

                    Task send = lines.Count == 0
                        ? Task.CompletedTask
                        : _pipeline.ExecuteAsync(static (state, token) => new ValueTask(state.Writer.WriteAsync(state.Lines, token)), (Writer: _writer, Lines: lines), cancellationToken).AsTask();
                    after = batch[^1].Id;
                    inFlight.Enqueue((batch[0].Id, after, batch.Count, send));
                }

                if (inFlight.Count == 0)
                {
                    SetState(ForwarderState.Idle);
                    await WaitAsync(_options.IdlePoll, wakeable: true, cancellationToken).ConfigureAwait(false);
                    continue;
                }

                (_, long lastId, int count, Task oldest) = inFlight.Dequeue();
                try
                {
                    await oldest.ConfigureAwait(false);
                }
                catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
                {
                    return;
                }
                catch (Exception e)
                {
                    Interlocked.Increment(ref _failures);
                    lock (_gate)
                    {
                        _lastError = e.Message;
                    }

                    // The later requests are not removed whatever their outcome: everything after the last removed
                    // batch is read again, and what the server took meanwhile is left out when it is sent again.
                    taken.AddRange(await DrainAsync(inFlight).ConfigureAwait(false));
                    after = long.MinValue;
                    LogForwardFailed(_logger, count, _outbox.PendingRecords, e.Message);
                    SetState(e is BrokenCircuitException ? ForwarderState.CircuitOpen : ForwarderState.Failing);
                    await WaitAsync(_options.PauseAfterFailure, wakeable: false, cancellationToken).ConfigureAwait(false);
                    continue;
                }

                _outbox.Remove(lastId);
                taken.RemoveAll(t => t.LastId <= lastId);
                Interlocked.Add(ref _forwarded, count);
                bool recovered;
                lock (_gate)
                {
                    _lastSuccess = _time.GetUtcNow();
                    recovered = _state is ForwarderState.Failing or ForwarderState.CircuitOpen;
                }

                if (recovered)
                {
                    LogForwardResumed(_logger, _outbox.PendingRecords);
                }

                SetState(ForwarderState.Forwarding);
                BatchForwarded?.Invoke(count);
            }
        }
        finally
        {
            // Stopping: the requests still in flight end with the token; what they carried stays in the outbox.
            _ = await DrainAsync(inFlight).ConfigureAwait(false);
        }
    }

    /// <summary>Awaits the requests still in flight and returns the id ranges of the batches the server accepted.</summary>
    private static async Task<List<(long FirstId, long LastId)>> DrainAsync(Queue<(long FirstId, long LastId, int Count, Task Send)> inFlight)
    {
        var accepted = new List<(long FirstId, long LastId)>();
        while (inFlight.TryDequeue(out var pending))
        {
            try
            {
                await pending.Send.ConfigureAwait(false);
                accepted.Add((pending.FirstId, pending.LastId));
            }
            catch (Exception)
            {
                // Its points stay in the outbox and are sent again.
            }
        }

        return accepted;
    }

    private static bool Taken(List<(long FirstId, long LastId)> taken, long id)
    {
        foreach ((long first, long last) in taken)
        {
            if (id >= first && id <= last)
            {
                return true;
            }
        }

        return false;
    }

    private void Wake()
    {
        lock (_gate)
        {
            _pendingWake = true;
            _wake?.Cancel();
        }
    }

    private async Task WaitAsync(TimeSpan delay, bool wakeable, CancellationToken cancellationToken)
    {
        CancellationTokenSource linked;
        lock (_gate)
        {
            if (wakeable && _pendingWake)
            {
                _pendingWake = false;
                return;
            }

            linked = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
            if (wakeable)
            {
                _wake = linked;
            }
        }

        try
        {
            await Task.Delay(delay, _time, linked.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            // Woken by an append, or stopping: the loop looks at the token.
        }
        finally
        {
            lock (_gate)
            {
                if (ReferenceEquals(_wake, linked))
                {
                    _wake = null;
                }

                if (wakeable)
                {
                    _pendingWake = false;
                }
            }

            linked.Dispose();
        }
    }

    private void SetState(ForwarderState state)
    {
        bool changed;
        lock (_gate)
        {
            changed = _state != state;
            _state = state;
        }

        if (changed)
        {
            StateChanged?.Invoke(state);
        }
    }

    [LoggerMessage(EventId = 3101, Level = LogLevel.Warning, Message = "Could not forward {Count} points to the time-series server ({Error}); {Pending} points wait in the outbox")]
    private static partial void LogForwardFailed(ILogger logger, int count, long pending, string error);

    [LoggerMessage(EventId = 3102, Level = LogLevel.Information, Message = "Forwarding to the time-series server again; {Pending} points wait in the outbox")]
    private static partial void LogForwardResumed(ILogger logger, long pending);

    [LoggerMessage(EventId = 3103, Level = LogLevel.Warning, Message = "Circuit to the time-series server opened for {BreakDuration} after repeated failures")]
    private static partial void LogCircuitOpened(ILogger logger, TimeSpan breakDuration);

    [LoggerMessage(EventId = 3104, Level = LogLevel.Information, Message = "Circuit to the time-series server closed")]
    private static partial void LogCircuitClosed(ILogger logger);
}

namespace Tieflow.Storage.Outbox;

/// <summary>How the forwarder drains the outbox: batch size, retries, circuit breaker.</summary>
public sealed class OutboxForwarderOptions
{
    /// <summary>Points per write request.</summary>
    public int BatchSize { get; init; } = 5000;

    /// <summary>
    /// Write requests in flight at once (1 to 8): while the server takes one batch the next is read and compressed.
    /// Batches are removed from the outbox in order, each once it and every batch before it were accepted.
    /// </summary>
    public int MaxInFlight { get; init; } = 2;

    /// <summary>Retries of one batch before the attempt counts as failed.</summary>
    public int RetryAttempts { get; init; } = 3;

    /// <summary>First retry delay (exponential with jitter after it).</summary>
    public TimeSpan RetryDelay { get; init; } = TimeSpan.FromMilliseconds(200);

    /// <summary>Longest retry delay.</summary>
    public TimeSpan MaxRetryDelay { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>Share of failed calls within <see cref="SamplingDuration"/> that opens the circuit.</summary>
    public double FailureRatio { get; init; } = 0.5;

    /// <summary>Calls within <see cref="SamplingDuration"/> before the breaker judges.</summary>
    public int MinimumThroughput { get; init; } = 4;

    public TimeSpan SamplingDuration { get; init; } = TimeSpan.FromSeconds(30);

    /// <summary>How long the circuit stays open before one trial call.</summary>
    public TimeSpan BreakDuration { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>Pause after a failed attempt before the next.</summary>
    public TimeSpan PauseAfterFailure { get; init; } = TimeSpan.FromSeconds(1);

    /// <summary>Longest wait on an empty outbox before looking again (an append wakes the forwarder at once).</summary>
    public TimeSpan IdlePoll { get; init; } = TimeSpan.FromSeconds(1);
}

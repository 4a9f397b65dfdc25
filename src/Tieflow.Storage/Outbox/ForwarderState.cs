namespace Tieflow.Storage.Outbox;

/// <summary>What the forwarder is doing.</summary>
public enum ForwarderState
{
    /// <summary>The outbox is empty; waiting for records.</summary>
    Idle,

    /// <summary>Sending, and the server accepts.</summary>
    Forwarding,

    /// <summary>The last attempt failed after its retries; the outbox holds the records.</summary>
    Failing,

    /// <summary>The circuit breaker is open after repeated failures: no attempt until it half-opens.</summary>
    CircuitOpen,
}

namespace Tieflow.Storage.Outbox;

/// <summary>How full the outbox is.</summary>
public enum OutboxState
{
    /// <summary>Within its limit; nothing dropped.</summary>
    Normal,

    /// <summary>At its limit: the oldest signal samples are being dropped (an alert says so).</summary>
    Shedding,

    /// <summary>Above its limit with no signal sample left to drop: alerts and analysis records are kept regardless.</summary>
    Overfull,
}

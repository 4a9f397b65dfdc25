namespace Tieflow.OpcUa.Transport;

/// <summary>
/// The tokens of one secure channel: the newest is used to send; every token is accepted on receipt until it
/// has lived 125 % of its lifetime (docs/opcua.md §1.12: a peer may still answer parked requests with an old token).
/// </summary>
internal sealed class SecurityTokenSet
{
    private readonly TimeProvider _time;
    private readonly List<(uint TokenId, long Expires)> _tokens = [];
    private readonly Lock _lock = new();
    private long _currentExpires = long.MaxValue;

    public SecurityTokenSet(TimeProvider time) => _time = time;

    public uint CurrentTokenId { get; private set; }

    public TimeSpan CurrentLifetime { get; private set; }

    public void Add(uint tokenId, TimeSpan lifetime)
    {
        lock (_lock)
        {
            var now = _time.GetTimestamp();
            _tokens.RemoveAll(t => t.Expires < now);
            _currentExpires = now + (long)(lifetime.TotalSeconds * 1.25 * _time.TimestampFrequency);
            _tokens.Add((tokenId, _currentExpires));
            CurrentTokenId = tokenId;
            CurrentLifetime = lifetime;
        }
    }

    /// <summary>True when the newest token has lived past 125 % of its lifetime (it was not renewed in time); false before the first token.</summary>
    public bool IsCurrentExpired()
    {
        lock (_lock)
        {
            return _time.GetTimestamp() > _currentExpires;
        }
    }

    public bool IsAccepted(uint tokenId)
    {
        lock (_lock)
        {
            if (tokenId == CurrentTokenId)
            {
                return true;
            }

            var now = _time.GetTimestamp();
            foreach (var (id, expires) in _tokens)
            {
                if (id == tokenId && expires >= now)
                {
                    return true;
                }
            }

            return false;
        }
    }
}

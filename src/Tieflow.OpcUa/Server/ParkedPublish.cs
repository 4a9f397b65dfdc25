using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// A Publish request waiting for something to send. <see cref="Reply"/> is called exactly once, with an answer or
/// with a bad status for a ServiceFault.
/// </summary>
internal sealed class ParkedPublish
{
    private readonly Action<PublishAnswer?, StatusCode> _reply;
    private int _answered;

    public ParkedPublish(object channel, DateTime deadline, StatusCode[] acknowledgementResults, Action<PublishAnswer?, StatusCode> reply)
    {
        Channel = channel;
        Deadline = deadline;
        AcknowledgementResults = acknowledgementResults;
        _reply = reply;
    }

    /// <summary>The channel the request came on (responses go back on it).</summary>
    public object Channel { get; }

    /// <summary>When the request times out (from its TimeoutHint), or <see cref="DateTime.MaxValue"/>.</summary>
    public DateTime Deadline { get; }

    public StatusCode[] AcknowledgementResults { get; }

    public void Reply(PublishAnswer answer)
    {
        if (Interlocked.Exchange(ref _answered, 1) == 0)
        {
            _reply(answer, StatusCodes.Good);
        }
    }

    public void Fail(StatusCode status)
    {
        if (Interlocked.Exchange(ref _answered, 1) == 0)
        {
            _reply(null, status);
        }
    }
}

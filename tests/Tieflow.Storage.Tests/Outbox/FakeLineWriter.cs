using Tieflow.Storage.Influx;

namespace Tieflow.Storage.Tests.Outbox;

/// <summary>A server stand-in: keeps what it accepted; fails while <see cref="Down"/> is set.</summary>
internal sealed class FakeLineWriter : IInfluxLineWriter
{
    private readonly Lock _gate = new();
    private readonly List<string> _accepted = [];

    public volatile bool Down;

    public int Calls;

    public int Failures;

    public IReadOnlyList<string> Accepted
    {
        get
        {
            lock (_gate)
            {
                return [.. _accepted];
            }
        }
    }

    public Task WriteAsync(IReadOnlyList<string> lines, CancellationToken cancellationToken)
    {
        Interlocked.Increment(ref Calls);
        if (Down)
        {
            Interlocked.Increment(ref Failures);
            throw new HttpRequestException("connection refused (fake server is down)");
        }

        lock (_gate)
        {
            _accepted.AddRange(lines);
        }

        return Task.CompletedTask;
    }
}

using System.Threading.Channels;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Sources;

/// <summary>Runs a source into a channel and keeps what it wrote, so that a test can wait for events with generous timeouts.</summary>
internal sealed class SourceEventLog : IAsyncDisposable
{
    private readonly Channel<SourceEvent> _channel = Channel.CreateUnbounded<SourceEvent>();
    private readonly List<SourceEvent> _events = [];
    private readonly CancellationTokenSource _stop = new();
    private readonly Task _reading;

    public SourceEventLog(ISignalSource source)
    {
        Run = Task.Run(() => source.RunAsync(_channel.Writer, _stop.Token));
        _reading = Task.Run(async () =>
        {
            await foreach (SourceEvent e in _channel.Reader.ReadAllAsync())
            {
                lock (_events)
                {
                    _events.Add(e);
                }
            }
        });
    }

    /// <summary>The source's run (faults when the source throws).</summary>
    public Task Run { get; }

    public IReadOnlyList<SourceEvent> Snapshot()
    {
        lock (_events)
        {
            return [.. _events];
        }
    }

    public int Count
    {
        get
        {
            lock (_events)
            {
                return _events.Count;
            }
        }
    }

    /// <summary>The index of the first event at or after <paramref name="from"/> that matches, waiting up to <paramref name="timeout"/>.</summary>
    public async Task<int> WaitForAsync(Func<SourceEvent, bool> match, TimeSpan timeout, int from = 0, string? what = null)
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (true)
        {
            bool ended = Run.IsCompleted;
            if (ended)
            {
                await DrainAsync();
            }

            IReadOnlyList<SourceEvent> events = Snapshot();
            for (int i = from; i < events.Count; i++)
            {
                if (match(events[i]))
                {
                    return i;
                }
            }

            if (ended)
            {
                await Run; // rethrows the source's failure
                Assert.Fail($"the source ended without {what ?? "the event"}; it wrote {events.Count} events");
            }

            if (clock.Elapsed > timeout)
            {
                Assert.Fail($"no {what ?? "matching event"} within {timeout}; the source wrote {events.Count} events, the last states: " +
                    string.Join(" | ", events.OfType<SourceStateChanged>().TakeLast(5)));
            }

            await Task.Delay(50);
        }
    }

    /// <summary>After the run ended: waits until every event it wrote is in the log.</summary>
    public async Task DrainAsync()
    {
        _channel.Writer.TryComplete();
        await _reading;
    }

    /// <summary>Stops the source and returns its run.</summary>
    public async Task StopAsync()
    {
        await _stop.CancelAsync();
        try
        {
            await Run.WaitAsync(TimeSpan.FromSeconds(30));
        }
        finally
        {
            _channel.Writer.TryComplete();
            await _reading;
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (!_stop.IsCancellationRequested)
        {
            try
            {
                await StopAsync();
            }
            catch (Exception e) when (e is SignalSourceException or TimeoutException)
            {
                // The test has asserted on the outcome already.
            }
        }

        _stop.Dispose();
    }
}

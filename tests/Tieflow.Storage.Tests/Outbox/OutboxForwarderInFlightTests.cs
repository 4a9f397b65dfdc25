using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Points;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Storage.Tests.Outbox;

/// <summary>Two write requests in flight: a batch leaves the outbox only once it and every batch before it were accepted.</summary>
public sealed class OutboxForwarderInFlightTests : IDisposable
{
    private static readonly TimeSpan WallLimit = TimeSpan.FromSeconds(60);
    private readonly TempFolder _folder = new();
    private readonly FakeTimeProvider _clock = new(new DateTimeOffset(2026, 12, 1, 0, 0, 0, TimeSpan.Zero));

    public void Dispose() => _folder.Dispose();

    [Theory]
    [InlineData(0)]
    [InlineData(9)]
    public void Requests_in_flight_outside_1_to_8_are_refused(int inFlight)
    {
        using var outbox = new StoreOutbox(new OutboxOptions { Path = _folder.File("outbox.db"), Site = Records.Site });
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => new OutboxForwarder(outbox, new GatedWriter(), new OutboxForwarderOptions { MaxInFlight = inFlight }, _clock));
        Assert.Contains("MaxInFlight", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_later_batch_accepted_before_an_earlier_one_fails_stays_until_the_earlier_one_is_accepted()
    {
        using var outbox = new StoreOutbox(new OutboxOptions { Path = _folder.File("outbox.db"), Site = Records.Site });
        var writer = new GatedWriter();
        var options = new OutboxForwarderOptions
        {
            BatchSize = 500,
            MaxInFlight = 2,
            RetryAttempts = 1,
            RetryDelay = TimeSpan.FromMilliseconds(10),
            MinimumThroughput = 100,
            PauseAfterFailure = TimeSpan.FromMilliseconds(100),
        };
        var forwarder = new OutboxForwarder(outbox, writer, options, _clock);
        List<MonitorRecord> records = Records.Mixed(1000);
        List<string> lines = records.Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()).ToList();
        outbox.Append(records);
        using var cts = new CancellationTokenSource();
        Task run = forwarder.RunAsync(cts.Token);

        // Both batches are on their way; the second is accepted first.
        await Until(() => writer.Started == 2);
        Assert.Equal(lines.Skip(500), writer.Lines(1));
        writer.Complete(1, null);
        await Task.Delay(200);
        Assert.Equal(1000, outbox.PendingRecords);

        // The first fails, and its retry too: nothing is removed, both batches are read again from the oldest, and
        // only the first is sent again: the server has the second already.
        writer.FailNext = true;
        writer.Complete(0, new HttpRequestException("refused (fake)"));
        await Until(() => outbox.PendingRecords == 0);
        await cts.CancelAsync();
        await run;

        Assert.Equal(lines.Count, writer.Accepted.Count);
        Assert.All(lines, l => Assert.Single(writer.Accepted, a => a == l));
        Assert.Equal(1, forwarder.Failures);
    }

    private async Task Until(Func<bool> condition)
    {
        DateTime limit = DateTime.UtcNow + WallLimit;
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < limit, "the condition did not come true within the wall-clock bound");
            _clock.Advance(TimeSpan.FromMilliseconds(50));
            await Task.Delay(2);
        }
    }

    /// <summary>The first two requests wait for the test; the first one after <see cref="FailNext"/> fails; the rest are accepted at once.</summary>
    private sealed class GatedWriter : IInfluxLineWriter
    {
        private readonly Lock _gate = new();
        private readonly List<(IReadOnlyList<string> Lines, TaskCompletionSource Done)> _gated = [];
        private readonly List<string> _accepted = [];

        public volatile bool FailNext;

        public int Started { get { lock (_gate) { return _gated.Count; } } }

        public List<string> Accepted { get { lock (_gate) { return [.. _accepted]; } } }

        public IReadOnlyList<string> Lines(int call) { lock (_gate) { return _gated[call].Lines; } }

        public void Complete(int call, Exception? failure)
        {
            (IReadOnlyList<string> lines, TaskCompletionSource done) = _gated[call];
            if (failure is null)
            {
                lock (_gate)
                {
                    _accepted.AddRange(lines);
                }

                done.SetResult();
            }
            else
            {
                done.SetException(failure);
            }
        }

        public Task WriteAsync(IReadOnlyList<string> lines, CancellationToken cancellationToken)
        {
            lock (_gate)
            {
                if (_gated.Count < 2)
                {
                    var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
                    _gated.Add(([.. lines], done));
                    return done.Task;
                }

                if (FailNext)
                {
                    FailNext = false;
                    return Task.FromException(new HttpRequestException("refused again (fake)"));
                }

                _accepted.AddRange(lines);
                return Task.CompletedTask;
            }
        }
    }
}

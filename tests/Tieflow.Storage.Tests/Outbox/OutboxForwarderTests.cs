using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Points;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Storage.Tests.Outbox;

public sealed class OutboxForwarderTests : IDisposable
{
    private static readonly TimeSpan WallLimit = TimeSpan.FromSeconds(60);
    private readonly TempFolder _folder = new();
    private readonly FakeTimeProvider _clock = new(new DateTimeOffset(2026, 12, 1, 0, 0, 0, TimeSpan.Zero));

    public void Dispose() => _folder.Dispose();

    private StoreOutbox Open() => new(new OutboxOptions { Path = _folder.File("outbox.db"), Site = Records.Site });

    private static List<string> Lines(IEnumerable<MonitorRecord> records) => records.Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()).ToList();

    /// <summary>Moves the fake clock on in small steps until the condition holds (bounded by generous wall-clock time).</summary>
    private async Task RunClockUntil(Func<bool> condition)
    {
        DateTime limit = DateTime.UtcNow + WallLimit;
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < limit, "the condition did not come true within the wall-clock bound");
            _clock.Advance(TimeSpan.FromMilliseconds(250));
            await Task.Delay(2);
        }
    }

    [Fact]
    public async Task Everything_appended_is_forwarded_once_in_order()
    {
        using StoreOutbox outbox = Open();
        var writer = new FakeLineWriter();
        var forwarder = new OutboxForwarder(outbox, writer, new OutboxForwarderOptions { BatchSize = 500 }, _clock);
        using var cts = new CancellationTokenSource();
        Task run = forwarder.RunAsync(cts.Token);
        List<MonitorRecord> records = Records.Mixed(3000);
        foreach (MonitorRecord[] chunk in records.Chunk(250))
        {
            outbox.Append(chunk);
        }

        await RunClockUntil(() => outbox.PendingRecords == 0);
        await cts.CancelAsync();
        await run;
        Assert.Equal(Lines(records), writer.Accepted);
        Assert.Equal(3000, forwarder.Forwarded);
    }

    [Fact]
    public async Task An_outage_opens_the_circuit_holds_the_records_and_they_arrive_once_after_it()
    {
        using StoreOutbox outbox = Open();
        var writer = new FakeLineWriter { Down = true };
        var options = new OutboxForwarderOptions { BatchSize = 200, RetryAttempts = 2, MinimumThroughput = 2, BreakDuration = TimeSpan.FromSeconds(5) };
        var forwarder = new OutboxForwarder(outbox, writer, options, _clock);
        var states = new List<ForwarderState>();
        forwarder.StateChanged += s => { lock (states) { states.Add(s); } };
        using var cts = new CancellationTokenSource();
        Task run = forwarder.RunAsync(cts.Token);

        List<MonitorRecord> records = Records.Mixed(2000);
        outbox.Append(records.Take(1000).ToList());
        await RunClockUntil(() => forwarder.State == ForwarderState.CircuitOpen);
        outbox.Append(records.Skip(1000).ToList()); // acknowledged while the server is away
        Assert.Equal(2000, outbox.PendingRecords);
        Assert.Empty(writer.Accepted);

        writer.Down = false;
        await RunClockUntil(() => outbox.PendingRecords == 0);
        await cts.CancelAsync();
        await run;

        Assert.Equal(Lines(records), writer.Accepted);
        Assert.True(writer.Failures >= 2);
        lock (states)
        {
            int open = states.IndexOf(ForwarderState.CircuitOpen);
            Assert.True(open >= 0, "the circuit opened");
            Assert.Contains(ForwarderState.Forwarding, states.Skip(open));
        }
    }

    [Fact]
    public async Task A_new_forwarder_on_the_same_file_resumes_where_the_last_one_stopped()
    {
        List<MonitorRecord> records = Records.Mixed(1500);
        var first = new FakeLineWriter();
        using (StoreOutbox outbox = Open())
        {
            var forwarder = new OutboxForwarder(outbox, first, new OutboxForwarderOptions { BatchSize = 100 }, _clock);
            outbox.Append(records.Take(500).ToList());
            using var cts = new CancellationTokenSource();
            Task run = forwarder.RunAsync(cts.Token);
            await RunClockUntil(() => outbox.PendingRecords == 0);
            await cts.CancelAsync();
            await run;
            first.Down = true;
            outbox.Append(records.Skip(500).ToList());
        }

        var second = new FakeLineWriter();
        using (StoreOutbox outbox = Open())
        {
            Assert.Equal(1000, outbox.PendingRecords);
            var forwarder = new OutboxForwarder(outbox, second, new OutboxForwarderOptions { BatchSize = 100 }, _clock);
            using var cts = new CancellationTokenSource();
            Task run = forwarder.RunAsync(cts.Token);
            await RunClockUntil(() => outbox.PendingRecords == 0);
            await cts.CancelAsync();
            await run;
        }

        Assert.Equal(Lines(records), first.Accepted.Concat(second.Accepted));
    }

    [Fact]
    public async Task Flush_of_the_sink_completes_once_the_forwarder_emptied_the_outbox()
    {
        using StoreOutbox outbox = Open();
        var writer = new FakeLineWriter();
        var forwarder = new OutboxForwarder(outbox, writer, new OutboxForwarderOptions(), _clock);
        await using var sink = new OutboxSink(outbox);
        await sink.WriteAsync(Records.Mixed(800), CancellationToken.None);
        using var cts = new CancellationTokenSource();
        Task run = forwarder.RunAsync(cts.Token);
        Task flush = sink.FlushAsync(CancellationToken.None);
        await RunClockUntil(() => flush.IsCompleted);
        await flush;
        Assert.Equal(800, writer.Accepted.Count);
        await cts.CancelAsync();
        await run;
    }
}

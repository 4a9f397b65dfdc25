using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Points;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Storage.Tests.Outbox;

public sealed class OutboxTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private StoreOutbox Open(long maxBytes = 64L * 1024 * 1024) =>
        new(new OutboxOptions { Path = _folder.File("outbox.db"), Site = Records.Site, MaxBytes = maxBytes });

    private static long Bytes(IEnumerable<MonitorRecord> records) =>
        records.Sum(r => (long)System.Text.Encoding.UTF8.GetByteCount(RecordPoints.ToPoint(r, Records.Site)!.ToLine()));

    [Fact]
    public void Points_come_out_in_the_order_they_went_in_and_are_gone_once_removed()
    {
        using StoreOutbox outbox = Open();
        List<MonitorRecord> records = Records.Mixed(300);
        outbox.Append(records);
        Assert.Equal(300, outbox.PendingRecords);
        Assert.Equal(Bytes(records), outbox.PendingBytes);

        IReadOnlyList<OutboxEntry> first = outbox.Peek(100);
        Assert.Equal(records.Take(100).Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()), first.Select(e => e.Line));
        outbox.Remove(first[^1].Id);
        Assert.Equal(200, outbox.PendingRecords);
        Assert.Equal(RecordPoints.ToPoint(records[100], Records.Site)!.ToLine(), outbox.Peek(1)[0].Line);
    }

    [Fact]
    public void Sequence_numbers_are_not_reused_after_the_outbox_was_empty()
    {
        using StoreOutbox outbox = Open();
        outbox.Append(Records.Mixed(10));
        long last = outbox.Peek(100)[^1].Id;
        outbox.Remove(last);
        Assert.Equal(0, outbox.PendingRecords);
        outbox.Append(Records.Mixed(10, Records.Start.AddDays(1)));
        Assert.Equal(10, outbox.Peek(100, last).Count);
    }

    [Fact]
    public void After_a_restart_the_outbox_resumes_with_what_was_not_removed()
    {
        List<MonitorRecord> records = Records.Mixed(1000);
        using (StoreOutbox outbox = Open())
        {
            outbox.Append(records);
            outbox.Remove(outbox.Peek(400)[^1].Id);
        }

        using StoreOutbox again = Open();
        Assert.Equal(600, again.PendingRecords);
        Assert.Equal(Bytes(records.Skip(400)), again.PendingBytes);
        Assert.Equal(records.Skip(400).Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()), again.Peek(10_000).Select(e => e.Line));
    }

    [Fact]
    public void Batches_read_and_removed_in_turn_with_appends_and_shedding_between_keep_the_counts_exact_across_a_restart()
    {
        // The forwarder's statements are compiled once and used again and again; samples of a batch already read may
        // be dropped by a full outbox before the batch is removed, and the removal must count only what was left.
        List<MonitorRecord> records = Records.Mixed(6000);
        long limit = Bytes(records.Take(2000)) / 2;
        IReadOnlyList<string> Held(StoreOutbox o) => [.. o.Peek(100_000).Select(e => e.Line)];
        long HeldBytes(StoreOutbox o) => Held(o).Sum(l => (long)System.Text.Encoding.UTF8.GetByteCount(l));
        using (StoreOutbox outbox = Open(limit))
        {
            foreach (MonitorRecord[] chunk in records.Take(4000).Chunk(500))
            {
                IReadOnlyList<OutboxEntry> batch = outbox.Peek(300);
                outbox.Append(chunk);
                if (batch.Count > 0)
                {
                    outbox.Remove(batch[^1].Id);
                }

                Assert.Equal(Held(outbox).Count, outbox.PendingRecords);
                Assert.Equal(HeldBytes(outbox), outbox.PendingBytes);
            }

            Assert.True(outbox.DroppedRecords > 0, "the outbox was meant to shed");
        }

        using StoreOutbox again = Open(limit);
        Assert.Equal(Held(again).Count, again.PendingRecords);
        Assert.Equal(HeldBytes(again), again.PendingBytes);
        long previous = long.MinValue;
        foreach (MonitorRecord[] chunk in records.Skip(4000).Chunk(500))
        {
            again.Append(chunk);
            IReadOnlyList<OutboxEntry> batch = again.Peek(700);
            Assert.True(batch[0].Id > previous, "removed points come back");
            previous = batch[^1].Id;
            again.Remove(previous);
            Assert.Equal(Held(again).Count, again.PendingRecords);
            Assert.Equal(HeldBytes(again), again.PendingBytes);
        }

        while (again.Peek(1000) is { Count: > 0 } rest)
        {
            again.Remove(rest[^1].Id);
        }

        Assert.Equal(0, again.PendingRecords);
        Assert.Equal(0, again.PendingBytes);
    }

    [Fact]
    public void A_full_outbox_drops_the_oldest_signal_samples_first_keeps_analysis_records_and_alerts_and_raises_an_alert()
    {
        List<MonitorRecord> records = Records.Mixed(4000);
        long limit = Bytes(records) / 2;
        using StoreOutbox outbox = Open(limit);
        var states = new List<OutboxState>();
        outbox.StateChanged += states.Add;
        foreach (MonitorRecord[] chunk in records.Chunk(100))
        {
            outbox.Append(chunk);
        }

        Assert.Equal(OutboxState.Shedding, outbox.State);
        Assert.Equal([OutboxState.Shedding], states);
        Assert.True(outbox.PendingBytes <= limit, $"{outbox.PendingBytes} bytes held for a limit of {limit}");
        Assert.True(outbox.DroppedRecords > 0);

        var held = outbox.Peek(100_000).Select(e => e.Line).ToList();
        var analysis = records.Where(r => !r.IsExpendable).Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()).ToList();
        Assert.All(analysis, line => Assert.Contains(line, held));
        var signalsHeld = held.Where(l => l.StartsWith("tieflow_signal", StringComparison.Ordinal)).ToList();
        var signalsIn = records.Where(r => r.IsExpendable).Select(r => RecordPoints.ToPoint(r, Records.Site)!.ToLine()).ToList();
        Assert.Equal(signalsIn.Skip(signalsIn.Count - signalsHeld.Count), signalsHeld); // the newest ones, in order
        Assert.Equal(signalsIn.Count - signalsHeld.Count, outbox.DroppedRecords);

        string alert = Assert.Single(held, l => l.Contains("kind=store-backlog", StringComparison.Ordinal));
        Assert.StartsWith("tieflow_alert,kind=store-backlog,severity=medium,site=Brackenmoor,unit=X300 active=1i,", alert);
    }

    [Fact]
    public void A_shedding_outbox_clears_its_alert_once_it_has_drained()
    {
        List<MonitorRecord> records = Records.Mixed(2000);
        using StoreOutbox outbox = Open(Bytes(records) / 2);
        outbox.Append(records);
        Assert.Equal(OutboxState.Shedding, outbox.State);
        outbox.Remove(outbox.Peek(100_000)[^1].Id);
        Assert.Equal(OutboxState.Normal, outbox.State);
        string cleared = Assert.Single(outbox.Peek(10)).Line;
        Assert.StartsWith("tieflow_alert,kind=store-backlog,severity=medium,site=Brackenmoor,unit=X300 active=0i,", cleared);
    }

    [Fact]
    public void The_shedding_state_survives_a_restart()
    {
        List<MonitorRecord> records = Records.Mixed(2000);
        long limit = Bytes(records) / 2;
        using (StoreOutbox outbox = Open(limit))
        {
            outbox.Append(records);
        }

        using StoreOutbox again = Open(limit);
        Assert.Equal(OutboxState.Shedding, again.State);
        Assert.True(again.DroppedRecords > 0);
    }

    [Fact]
    public void Analysis_records_beyond_the_limit_are_kept_and_the_outbox_says_it_is_overfull()
    {
        List<MonitorRecord> records = [.. Enumerable.Range(0, 200).Select(i => (MonitorRecord)Records.Stage(Records.Start.AddMinutes(i)))];
        using StoreOutbox outbox = Open(Bytes(records) / 4);
        outbox.Append(records);
        Assert.Equal(200, outbox.PendingRecords);
        Assert.Equal(OutboxState.Overfull, outbox.State);
        Assert.Equal(0, outbox.DroppedRecords);
    }
}

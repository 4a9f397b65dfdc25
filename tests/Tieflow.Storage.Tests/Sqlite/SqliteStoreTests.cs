using Microsoft.Data.Sqlite;
using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Storage.Tests.Sqlite;

public sealed class SqliteStoreTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly FakeTimeProvider _clock = new(new DateTimeOffset(2026, 12, 1, 0, 0, 0, TimeSpan.Zero));

    public void Dispose() => _folder.Dispose();

    private SqliteStore Open(TimeSpan? maxAge = null, long? maxBytes = null, string name = "store.db") =>
        new(new SqliteStoreOptions { Path = _folder.File(name), Site = Records.Site, MaxAge = maxAge, MaxBytes = maxBytes }, _clock);

    private StoreSummary Summary(string name = "store.db")
    {
        using var reader = SqliteStoreReader.Open(_folder.File(name));
        return reader.Summarize();
    }

    [Fact]
    public async Task Records_written_are_counted_by_measurement_with_their_time_span()
    {
        await using (var store = Open())
        {
            await store.WriteAsync(Records.Mixed(1000), CancellationToken.None);
        }

        StoreSummary s = Summary();
        long expectedSignals = Records.Mixed(1000).Count(r => r is SignalRecord);
        Assert.Equal(expectedSignals, s.Counts["tieflow_signal"]);
        Assert.Equal(1000, s.Counts.Values.Sum());
        Assert.Equal(Records.Start, s.From);
        Assert.Equal(Records.Mixed(1000).Max(r => r.Time), s.To);
    }

    [Fact]
    public async Task Writing_the_same_records_again_overwrites_instead_of_duplicating()
    {
        List<MonitorRecord> records = Records.Mixed(2000);
        await using (var store = Open())
        {
            await store.WriteAsync(records, CancellationToken.None);
            await store.WriteAsync(records, CancellationToken.None);
            await store.WriteAsync([Records.Stage(Records.Start, 1, efficiency: 0.5)], CancellationToken.None);
        }

        using var reader = SqliteStoreReader.Open(_folder.File("store.db"));
        Assert.Equal(2000, reader.Count());
        StoredPoint stage1 = reader.ReadMeasurement("tieflow_stage").First(p => p.Time == Records.Start && p.Tag("stage") == "1");
        Assert.Equal(0.5, stage1.Field("efficiency"));
    }

    [Fact]
    public async Task A_reopened_store_keeps_everything_and_passes_the_integrity_check()
    {
        await using (var store = Open())
        {
            await store.WriteAsync(Records.Mixed(5000), CancellationToken.None);
        }

        await using (var again = Open())
        {
            await again.WriteAsync(Records.Mixed(500, Records.Start.AddDays(1)), CancellationToken.None);
        }

        using var reader = SqliteStoreReader.Open(_folder.File("store.db"));
        Assert.Equal(5500, reader.Count());
        Assert.Equal("ok", reader.IntegrityCheck());
    }

    [Fact]
    public async Task The_file_is_in_wal_mode()
    {
        await using var store = Open();
        await store.WriteAsync(Records.Mixed(10), CancellationToken.None);
        using var c = new SqliteConnection($"Data Source={_folder.File("store.db")};Mode=ReadOnly;Pooling=False");
        c.Open();
        using SqliteCommand command = c.CreateCommand();
        command.CommandText = "PRAGMA journal_mode;";
        Assert.Equal("wal", command.ExecuteScalar());
    }

    [Fact]
    public async Task Retention_by_age_deletes_points_older_than_the_newest_minus_the_age()
    {
        await using (var store = Open(maxAge: TimeSpan.FromHours(1)))
        {
            await store.WriteAsync([Records.Stage(Records.Start), Records.Stage(Records.Start.AddMinutes(30))], CancellationToken.None);
            await store.WriteAsync([Records.Stage(Records.Start.AddMinutes(90))], CancellationToken.None);
            Assert.Equal(1, store.RetentionDeleted);
        }

        StoreSummary s = Summary();
        Assert.Equal(Records.Start.AddMinutes(30), s.From);
        Assert.Equal(2, s.Counts["tieflow_stage"]);
    }

    [Fact]
    public async Task Retention_by_age_uses_the_clock_when_records_come_from_the_future()
    {
        // The clock says 2026-12-01; a point dated a year later must not wipe the store.
        await using var store = Open(maxAge: TimeSpan.FromDays(30));
        await store.WriteAsync([Records.Stage(_clock.GetUtcNow().AddDays(-10)), Records.Stage(_clock.GetUtcNow().AddYears(1))], CancellationToken.None);
        Assert.Equal(0, store.RetentionDeleted);
    }

    [Fact]
    public async Task Retention_by_size_keeps_the_data_under_the_limit_and_drops_the_oldest()
    {
        const long limit = 2 * 1024 * 1024;
        await using (var store = Open(maxBytes: limit))
        {
            for (int day = 0; day < 10; day++)
            {
                await store.WriteAsync(Records.Mixed(10_000, Records.Start.AddDays(day), seed: day), CancellationToken.None);
            }

            Assert.True(store.RetentionDeleted > 0);
        }

        using var reader = SqliteStoreReader.Open(_folder.File("store.db"));
        StoreSummary s = reader.Summarize();
        Assert.True(new FileInfo(_folder.File("store.db")).Length <= limit * 1.2, $"file of {new FileInfo(_folder.File("store.db")).Length} bytes for a limit of {limit}");
        Assert.True(s.From > Records.Start, "the oldest points went first");
        Assert.Equal(Records.Mixed(10_000, Records.Start.AddDays(9)).Max(r => r.Time), s.To);
        Assert.Equal("ok", reader.IntegrityCheck());
    }

    [Fact]
    public async Task Summary_has_the_latest_point_of_each_series_and_every_alert_in_time_order()
    {
        await using (var store = Open())
        {
            await store.WriteAsync(
            [
                Records.Stage(Records.Start, 2, 0.9),
                Records.Stage(Records.Start.AddMinutes(1), 2, 0.7),
                Records.Stage(Records.Start, 3, 0.8),
                Records.Alert(Records.Start.AddMinutes(5), active: true),
                Records.Alert(Records.Start.AddMinutes(2), active: false, stage: 1),
            ], CancellationToken.None);
        }

        StoreSummary s = Summary();
        StoredPoint stage2 = s.Latest.Single(p => p.Measurement == "tieflow_stage" && p.Tag("stage") == "2");
        Assert.Equal(Records.Start.AddMinutes(1), stage2.Time);
        Assert.Equal(0.7, stage2.Field("efficiency"));
        Assert.Equal(2, s.Alerts.Count);
        Assert.Equal("1", s.Alerts[0].Tag("stage"));
        Assert.Equal(1.0, s.Alerts[1].Field("active"));
    }

    [Fact]
    public void Opening_a_missing_or_foreign_file_names_the_file()
    {
        var missing = Assert.Throws<StoreFormatException>(() => SqliteStoreReader.Open(_folder.File("none.db")));
        Assert.Contains("none.db", missing.Message);

        File.WriteAllText(_folder.File("text.db"), "not a database at all, just some text that is long enough to have a header");
        var text = Assert.Throws<StoreFormatException>(() => SqliteStoreReader.Open(_folder.File("text.db")));
        Assert.Contains("text.db", text.Message);

        using (var other = new SqliteConnection($"Data Source={_folder.File("other.db")};Pooling=False"))
        {
            other.Open();
            using SqliteCommand c = other.CreateCommand();
            c.CommandText = "CREATE TABLE t(x);";
            c.ExecuteNonQuery();
        }

        var foreign = Assert.Throws<StoreFormatException>(() => SqliteStoreReader.Open(_folder.File("other.db")));
        Assert.Contains("not a Tieflow store", foreign.Message);
    }
}

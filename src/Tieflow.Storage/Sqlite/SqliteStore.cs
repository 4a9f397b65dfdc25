using Microsoft.Data.Sqlite;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Sqlite;

/// <summary>
/// The embedded store: one SQLite file in WAL mode holding the points of docs/stores.md in one table keyed by
/// (time, measurement, tags), so that writing a record again overwrites it. Time leads the key because records arrive
/// in time order: inserts append at the end of the tree, and retention deletes from its start. Each batch is one transaction through a
/// prepared statement; retention by age and by size runs after each commit.
/// </summary>
public sealed class SqliteStore : IRecordSink
{
    private readonly SqliteStoreOptions _options;
    private readonly TimeProvider _time;
    private readonly SqliteConnection _connection;
    private readonly SqliteCommand _upsert;
    private readonly SqliteParameter _measurement;
    private readonly SqliteParameter _tags;
    private readonly SqliteParameter _timeMs;
    private readonly SqliteParameter _fields;
    private readonly Lock _gate = new();
    private long _newestMs = long.MinValue;
    private long _oldestMs = long.MinValue;
    private bool _disposed;

    public SqliteStore(SqliteStoreOptions options, TimeProvider time)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentException.ThrowIfNullOrWhiteSpace(options.Path);
        ArgumentException.ThrowIfNullOrWhiteSpace(options.Site);
        _options = options;
        _time = time;
        _connection = SqliteSchema.OpenForWriting(options.Path, options.SyncEveryCommit);
        try
        {
            CreateSchema(_connection);
            _upsert = _connection.CreateCommand();
            _upsert.CommandText =
                "INSERT INTO points(measurement, tags, time, fields) VALUES($m, $t, $time, $f) " +
                "ON CONFLICT(time, measurement, tags) DO UPDATE SET fields = excluded.fields;";
            _measurement = _upsert.Parameters.Add("$m", SqliteType.Text);
            _tags = _upsert.Parameters.Add("$t", SqliteType.Text);
            _timeMs = _upsert.Parameters.Add("$time", SqliteType.Integer);
            _fields = _upsert.Parameters.Add("$f", SqliteType.Text);
            _upsert.Prepare();
            _newestMs = SqliteSchema.Scalar(_connection, "SELECT coalesce(max(time), -9223372036854775808) FROM points;");
            _oldestMs = SqliteSchema.Scalar(_connection, "SELECT coalesce(min(time), -9223372036854775808) FROM points;");
        }
        catch
        {
            _connection.Dispose();
            throw;
        }
    }

    /// <summary>The database file.</summary>
    public string Path => _options.Path;

    /// <summary>Points deleted by retention since the store was opened.</summary>
    public long RetentionDeleted { get; private set; }

    /// <summary>Creates the tables of a store (idempotent).</summary>
    internal static void CreateSchema(SqliteConnection connection)
    {
        SqliteSchema.Execute(connection,
            "CREATE TABLE IF NOT EXISTS tieflow_meta(key TEXT PRIMARY KEY, value TEXT NOT NULL) WITHOUT ROWID;" +
            "CREATE TABLE IF NOT EXISTS points(" +
            " measurement TEXT NOT NULL, tags TEXT NOT NULL, time INTEGER NOT NULL, fields TEXT NOT NULL," +
            " PRIMARY KEY(time, measurement, tags)) WITHOUT ROWID;" +
            $"INSERT OR IGNORE INTO tieflow_meta(key, value) VALUES('kind', 'tieflow-store'), ('version', '{SqliteSchema.StoreVersion}');");
    }

    /// <inheritdoc />
    public Task WriteAsync(IReadOnlyList<MonitorRecord> batch, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(batch);
        cancellationToken.ThrowIfCancellationRequested();
        var points = new List<StorePoint>(batch.Count);
        foreach (MonitorRecord record in batch)
        {
            if (RecordPoints.ToPoint(record, _options.Site) is { } p)
            {
                points.Add(p);
            }
        }

        WritePoints(points);
        return Task.CompletedTask;
    }

    /// <summary>Writes points in one transaction and applies retention; returns once committed.</summary>
    public void WritePoints(IReadOnlyList<StorePoint> points)
    {
        ArgumentNullException.ThrowIfNull(points);
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            if (points.Count == 0)
            {
                return;
            }

            using (SqliteTransaction transaction = _connection.BeginTransaction())
            {
                _upsert.Transaction = transaction;
                foreach (StorePoint p in points)
                {
                    _measurement.Value = p.Measurement;
                    _tags.Value = p.Tags;
                    _timeMs.Value = p.TimeMs;
                    _fields.Value = p.Fields;
                    _upsert.ExecuteNonQuery();
                    if (p.TimeMs > _newestMs)
                    {
                        _newestMs = p.TimeMs;
                    }

                    if (_oldestMs == long.MinValue || p.TimeMs < _oldestMs)
                    {
                        _oldestMs = p.TimeMs;
                    }
                }

                transaction.Commit();
                _upsert.Transaction = null;
            }

            ApplyRetention();
        }
    }

    /// <inheritdoc />
    public Task FlushAsync(CancellationToken cancellationToken)
    {
        // Every write is committed before it returns; a checkpoint folds the log into the database file.
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            SqliteSchema.Execute(_connection, "PRAGMA wal_checkpoint(PASSIVE);");
        }

        return Task.CompletedTask;
    }

    private void ApplyRetention()
    {
        if (_options.MaxAge is { } maxAge)
        {
            long nowMs = _time.GetUtcNow().ToUnixTimeMilliseconds();
            long cutoff = Math.Min(nowMs, _newestMs) - (long)maxAge.TotalMilliseconds;
            if (_oldestMs != long.MinValue && _oldestMs < cutoff)
            {
                using SqliteCommand delete = _connection.CreateCommand();
                delete.CommandText = "DELETE FROM points WHERE time < $cutoff;";
                delete.Parameters.AddWithValue("$cutoff", cutoff);
                RetentionDeleted += delete.ExecuteNonQuery();
                _oldestMs = SqliteSchema.Scalar(_connection, "SELECT coalesce(min(time), -9223372036854775808) FROM points;");
                SqliteSchema.Execute(_connection, "PRAGMA incremental_vacuum;");
            }
        }

        if (_options.MaxBytes is { } maxBytes && SqliteSchema.UsedBytes(_connection) > maxBytes)
        {
            long used = SqliteSchema.UsedBytes(_connection);
            long count = SqliteSchema.Scalar(_connection, "SELECT count(*) FROM points;");
            // Delete the oldest share of points that brings the data to 90 % of the limit (rows are of similar size).
            long remove = Math.Clamp((long)Math.Ceiling(count * (1.0 - (0.9 * maxBytes / used))), 1, count);
            using (SqliteCommand delete = _connection.CreateCommand())
            {
                delete.CommandText =
                    "DELETE FROM points WHERE time <= (SELECT time FROM points ORDER BY time LIMIT 1 OFFSET $n);";
                delete.Parameters.AddWithValue("$n", remove - 1);
                RetentionDeleted += delete.ExecuteNonQuery();
            }

            _oldestMs = SqliteSchema.Scalar(_connection, "SELECT coalesce(min(time), -9223372036854775808) FROM points;");
            SqliteSchema.Execute(_connection, "PRAGMA incremental_vacuum;");
            SqliteSchema.Execute(_connection, "PRAGMA wal_checkpoint(TRUNCATE);");
        }
    }

    /// <inheritdoc />
    public ValueTask DisposeAsync()
    {
        lock (_gate)
        {
            if (_disposed)
            {
                return ValueTask.CompletedTask;
            }

            _disposed = true;
            _upsert.Dispose();
            try
            {
                SqliteSchema.Execute(_connection, "PRAGMA wal_checkpoint(TRUNCATE);");
            }
            catch (SqliteException)
            {
                // A reader holding the log open only delays the checkpoint to the next open.
            }

            _connection.Dispose();
        }

        return ValueTask.CompletedTask;
    }
}

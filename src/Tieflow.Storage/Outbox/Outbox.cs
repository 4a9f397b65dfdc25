using System.Globalization;
using System.Text;
using Microsoft.Data.Sqlite;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Points;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Storage.Outbox;

/// <summary>
/// A durable queue of points in a SQLite file. <see cref="Append"/> returns once the points are committed (that is
/// the acknowledgement); the forwarder reads the oldest with <see cref="Peek(int, long)"/> and removes them with
/// <see cref="Remove"/> only after the server accepted them, so a restart resumes with what was not yet forwarded,
/// and a batch that was sent but not removed is sent again (the points are idempotent: it overwrites).
/// When full it drops the oldest expendable points (signal samples) and raises a <c>store-backlog</c> alert.
/// Sequence numbers are never reused (AUTOINCREMENT), even after the outbox was empty: the forwarder's cursor and
/// <see cref="Remove"/> rely on it.
/// </summary>
public sealed class Outbox : IDisposable
{
    private const long NoTime = long.MinValue;
    private readonly OutboxOptions _options;
    private readonly SqliteConnection _connection;
    private readonly SqliteCommand _insert;
    private readonly SqliteParameter _line;
    private readonly SqliteParameter _expendable;
    private readonly SqliteParameter _bytes;
    private readonly SqliteParameter _unit;
    private readonly SqliteCommand _peek;
    private readonly SqliteParameter _peekAfter;
    private readonly SqliteParameter _peekCount;
    private readonly SqliteCommand _sum;
    private readonly SqliteParameter _sumThrough;
    private readonly SqliteCommand _delete;
    private readonly SqliteParameter _deleteThrough;
    private readonly Lock _gate = new();
    private readonly HashSet<string> _sheddingUnits = new(StringComparer.Ordinal);
    private TaskCompletionSource _removed = NewSignal();
    private long _pendingRecords;
    private long _pendingBytes;
    private long _dropped;
    private long _lastTimeMs = NoTime;
    private long _raisedTimeMs = NoTime;
    private bool _disposed;

    public Outbox(OutboxOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentException.ThrowIfNullOrWhiteSpace(options.Path);
        ArgumentException.ThrowIfNullOrWhiteSpace(options.Site);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(options.MaxBytes);
        _options = options;
        _connection = SqliteSchema.OpenForWriting(options.Path, options.SyncEveryCommit);
        try
        {
            SqliteSchema.Execute(_connection,
                "CREATE TABLE IF NOT EXISTS outbox(id INTEGER PRIMARY KEY AUTOINCREMENT, line TEXT NOT NULL, expendable INTEGER NOT NULL, bytes INTEGER NOT NULL, unit TEXT NOT NULL);" +
                "CREATE INDEX IF NOT EXISTS outbox_expendable ON outbox(id) WHERE expendable = 1;" +
                "CREATE TABLE IF NOT EXISTS outbox_meta(key TEXT PRIMARY KEY, value TEXT NOT NULL) WITHOUT ROWID;");
            _insert = _connection.CreateCommand();
            _insert.CommandText = "INSERT INTO outbox(line, expendable, bytes, unit) VALUES($l, $e, $b, $u);";
            _line = _insert.Parameters.Add("$l", SqliteType.Text);
            _expendable = _insert.Parameters.Add("$e", SqliteType.Integer);
            _bytes = _insert.Parameters.Add("$b", SqliteType.Integer);
            _unit = _insert.Parameters.Add("$u", SqliteType.Text);
            _insert.Prepare();

            // The forwarder's statements, compiled once: read a batch, and sum and remove what was forwarded.
            _peek = _connection.CreateCommand();
            _peek.CommandText = "SELECT id, line FROM outbox WHERE id > $after ORDER BY id LIMIT $n;";
            _peekAfter = _peek.Parameters.Add("$after", SqliteType.Integer);
            _peekCount = _peek.Parameters.Add("$n", SqliteType.Integer);
            _peek.Prepare();
            _sum = _connection.CreateCommand();
            _sum.CommandText = "SELECT count(*), coalesce(sum(bytes), 0) FROM outbox WHERE id <= $id;";
            _sumThrough = _sum.Parameters.Add("$id", SqliteType.Integer);
            _sum.Prepare();
            _delete = _connection.CreateCommand();
            _delete.CommandText = "DELETE FROM outbox WHERE id <= $id;";
            _deleteThrough = _delete.Parameters.Add("$id", SqliteType.Integer);
            _delete.Prepare();
            _pendingRecords = SqliteSchema.Scalar(_connection, "SELECT count(*) FROM outbox;");
            _pendingBytes = SqliteSchema.Scalar(_connection, "SELECT coalesce(sum(bytes), 0) FROM outbox;");
            LoadMeta();
        }
        catch
        {
            _connection.Dispose();
            throw;
        }
    }

    /// <summary>Raised after points were committed (the forwarder wakes up on it).</summary>
    public event Action? Appended;

    /// <summary>Raised when <see cref="State"/> changes.</summary>
    public event Action<OutboxState>? StateChanged;

    public string Path => _options.Path;

    public long MaxBytes => _options.MaxBytes;

    /// <summary>Points waiting to be forwarded.</summary>
    public long PendingRecords { get { lock (_gate) { return _pendingRecords; } } }

    /// <summary>Line protocol bytes waiting to be forwarded.</summary>
    public long PendingBytes { get { lock (_gate) { return _pendingBytes; } } }

    /// <summary>Signal samples dropped because the outbox was full, over the file's life.</summary>
    public long DroppedRecords { get { lock (_gate) { return _dropped; } } }

    public OutboxState State
    {
        get
        {
            lock (_gate)
            {
                return StateLocked();
            }
        }
    }

    /// <summary>Commits records (mapped through <see cref="RecordPoints"/>); returns once they are on disk.</summary>
    public void Append(IReadOnlyList<MonitorRecord> records)
    {
        ArgumentNullException.ThrowIfNull(records);
        var points = new List<StorePoint>(records.Count);
        foreach (MonitorRecord r in records)
        {
            if (RecordPoints.ToPoint(r, _options.Site) is { } p)
            {
                points.Add(p);
            }
        }

        AppendPoints(points);
    }

    /// <summary>Commits points; returns once they are on disk. Drops the oldest signal samples first when the outbox would exceed its limit.</summary>
    public void AppendPoints(IReadOnlyList<StorePoint> points)
    {
        ArgumentNullException.ThrowIfNull(points);
        if (points.Count == 0)
        {
            return;
        }

        OutboxState before;
        OutboxState after;
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            before = StateLocked();
            var lines = new string[points.Count];
            var sizes = new long[points.Count];
            long incoming = 0;
            long maxTime = _lastTimeMs;
            for (int i = 0; i < points.Count; i++)
            {
                lines[i] = points[i].ToLine();
                sizes[i] = Encoding.UTF8.GetByteCount(lines[i]);
                incoming += sizes[i];
                maxTime = Math.Max(maxTime, points[i].TimeMs);
            }

            long pendingRecords = _pendingRecords;
            long pendingBytes = _pendingBytes;
            long dropped = _dropped;
            var sheddingUnits = new HashSet<string>(_sheddingUnits, StringComparer.Ordinal);
            long raised = _raisedTimeMs;
            var skip = new bool[points.Count];
            using (SqliteTransaction transaction = _connection.BeginTransaction())
            {
                // Shedding frees a little more than the excess, so that the alert saying so fits too.
                long headroom = Math.Min(4096, _options.MaxBytes / 10);
                long excess = pendingBytes + incoming - _options.MaxBytes;
                if (excess > 0)
                {
                    excess += headroom;
                }

                var newlyShedding = new List<string>();
                if (excess > 0)
                {
                    // Oldest first: the signal samples already waiting, then those of this batch.
                    var (bytes, count, units) = DropOldestExpendable(excess, transaction);
                    pendingBytes -= bytes;
                    pendingRecords -= count;
                    dropped += count;
                    excess -= bytes;
                    for (int i = 0; i < points.Count && excess > 0; i++)
                    {
                        if (points[i].Expendable)
                        {
                            skip[i] = true;
                            excess -= sizes[i];
                            dropped++;
                            units.Add(points[i].Unit);
                        }
                    }

                    foreach (string unit in units)
                    {
                        if (sheddingUnits.Add(unit))
                        {
                            newlyShedding.Add(unit);
                        }
                    }
                }

                _insert.Transaction = transaction;
                for (int i = 0; i < points.Count; i++)
                {
                    if (skip[i])
                    {
                        continue;
                    }

                    Insert(lines[i], points[i].Expendable, sizes[i], points[i].Unit);
                    pendingBytes += sizes[i];
                    pendingRecords++;
                }

                foreach (string unit in newlyShedding)
                {
                    // The alert goes out with the data, on the data's time line.
                    raised = maxTime;
                    StorePoint alert = BacklogAlert(unit, maxTime, active: true, pendingBytes, dropped);
                    string line = alert.ToLine();
                    long size = Encoding.UTF8.GetByteCount(line);
                    Insert(line, false, size, unit);
                    pendingBytes += size;
                    pendingRecords++;
                }

                SaveMeta(transaction, dropped, sheddingUnits, raised, maxTime);
                transaction.Commit();
                _insert.Transaction = null;
            }

            // Only now, after the commit, does the state in memory follow.
            _pendingBytes = pendingBytes;
            _pendingRecords = pendingRecords;
            _dropped = dropped;
            _lastTimeMs = maxTime;
            _raisedTimeMs = raised;
            _sheddingUnits.Clear();
            _sheddingUnits.UnionWith(sheddingUnits);
            after = StateLocked();
        }

        Appended?.Invoke();
        if (after != before)
        {
            StateChanged?.Invoke(after);
        }
    }

    /// <summary>Up to <paramref name="max"/> of the oldest points, in the order they were committed.</summary>
    public IReadOnlyList<OutboxEntry> Peek(int max) => Peek(max, long.MinValue);

    /// <summary>Up to <paramref name="max"/> of the oldest points after the sequence number <paramref name="afterId"/>.</summary>
    public IReadOnlyList<OutboxEntry> Peek(int max, long afterId)
    {
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            _peekCount.Value = max;
            _peekAfter.Value = afterId;
            var result = new List<OutboxEntry>(Math.Min(max, 8192));
            using SqliteDataReader r = _peek.ExecuteReader();
            while (r.Read())
            {
                result.Add(new OutboxEntry(r.GetInt64(0), r.GetString(1)));
            }

            return result;
        }
    }

    /// <summary>Removes every point up to and including <paramref name="throughId"/> (they were forwarded).</summary>
    public void Remove(long throughId)
    {
        OutboxState before;
        OutboxState after;
        TaskCompletionSource signal;
        lock (_gate)
        {
            ObjectDisposedException.ThrowIf(_disposed, this);
            before = StateLocked();
            using (SqliteTransaction transaction = _connection.BeginTransaction())
            {
                long count;
                long bytes;
                _sum.Transaction = transaction;
                _sumThrough.Value = throughId;
                using (SqliteDataReader r = _sum.ExecuteReader())
                {
                    r.Read();
                    count = r.GetInt64(0);
                    bytes = r.GetInt64(1);
                }

                _sum.Transaction = null;
                _delete.Transaction = transaction;
                _deleteThrough.Value = throughId;
                _delete.ExecuteNonQuery();
                _delete.Transaction = null;

                long pendingBytes = _pendingBytes - bytes;
                long pendingRecords = _pendingRecords - count;
                bool clear = _sheddingUnits.Count > 0 && pendingBytes < _options.ClearBelowFraction * _options.MaxBytes;
                if (clear)
                {
                    long time = Math.Max(_lastTimeMs, _raisedTimeMs + 1);
                    _insert.Transaction = transaction;
                    foreach (string unit in _sheddingUnits)
                    {
                        string line = BacklogAlert(unit, time, active: false, pendingBytes, _dropped).ToLine();
                        long size = Encoding.UTF8.GetByteCount(line);
                        Insert(line, false, size, unit);
                        pendingBytes += size;
                        pendingRecords++;
                    }

                    _insert.Transaction = null;
                    SaveMeta(transaction, _dropped, [], NoTime, _lastTimeMs);
                }

                transaction.Commit();
                _pendingBytes = pendingBytes;
                _pendingRecords = pendingRecords;
                if (clear)
                {
                    _sheddingUnits.Clear();
                    _raisedTimeMs = NoTime;
                }
            }

            after = StateLocked();
            signal = _removed;
            _removed = NewSignal();
        }

        signal.TrySetResult();
        if (after != before)
        {
            StateChanged?.Invoke(after);
        }
    }

    /// <summary>Completes once the outbox is empty (everything acknowledged was forwarded) or the token is cancelled.</summary>
    public async Task WaitUntilEmptyAsync(CancellationToken cancellationToken)
    {
        while (true)
        {
            Task next;
            lock (_gate)
            {
                if (_pendingRecords == 0)
                {
                    return;
                }

                next = _removed.Task;
            }

            await next.WaitAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    public void Dispose()
    {
        lock (_gate)
        {
            if (_disposed)
            {
                return;
            }

            _disposed = true;
            _insert.Dispose();
            _peek.Dispose();
            _sum.Dispose();
            _delete.Dispose();
            try
            {
                SqliteSchema.Execute(_connection, "PRAGMA wal_checkpoint(TRUNCATE);");
            }
            catch (SqliteException)
            {
                // Folded into the file at the next open instead.
            }

            _connection.Dispose();
        }

        _removed.TrySetResult();
    }

    private static TaskCompletionSource NewSignal() => new(TaskCreationOptions.RunContinuationsAsynchronously);

    private OutboxState StateLocked() =>
        _pendingBytes > _options.MaxBytes ? OutboxState.Overfull
        : _sheddingUnits.Count > 0 ? OutboxState.Shedding
        : OutboxState.Normal;

    private void Insert(string line, bool expendable, long size, string unit)
    {
        _line.Value = line;
        _expendable.Value = expendable ? 1 : 0;
        _bytes.Value = size;
        _unit.Value = unit;
        _insert.ExecuteNonQuery();
    }

    private (long Bytes, long Count, HashSet<string> Units) DropOldestExpendable(long excess, SqliteTransaction transaction)
    {
        long bytes = 0;
        long count = 0;
        var units = new HashSet<string>(StringComparer.Ordinal);
        long lastId = long.MinValue;
        while (bytes < excess)
        {
            using SqliteCommand select = _connection.CreateCommand();
            select.Transaction = transaction;
            select.CommandText = "SELECT id, bytes, unit FROM outbox WHERE expendable = 1 AND id > $after ORDER BY id LIMIT 4096;";
            select.Parameters.AddWithValue("$after", lastId);
            int rows = 0;
            using (SqliteDataReader r = select.ExecuteReader())
            {
                while (bytes < excess && r.Read())
                {
                    rows++;
                    lastId = r.GetInt64(0);
                    bytes += r.GetInt64(1);
                    count++;
                    units.Add(r.GetString(2));
                }
            }

            if (rows == 0)
            {
                break;
            }
        }

        if (count > 0)
        {
            using SqliteCommand delete = _connection.CreateCommand();
            delete.Transaction = transaction;
            delete.CommandText = "DELETE FROM outbox WHERE expendable = 1 AND id <= $id;";
            delete.Parameters.AddWithValue("$id", lastId);
            delete.ExecuteNonQuery();
        }

        return (bytes, count, units);
    }

    private StorePoint BacklogAlert(string unit, long timeMs, bool active, long pendingBytes, long dropped)
    {
        string message = active
            ? $"The time-series server has not taken the records for a while and the outbox {_options.Path} is full " +
              $"({pendingBytes.ToString(CultureInfo.InvariantCulture)} of {_options.MaxBytes.ToString(CultureInfo.InvariantCulture)} bytes): " +
              "the oldest signal samples are being dropped; alerts and analysis records are kept."
            : $"The outbox {_options.Path} has drained below its limit; no more signal samples are dropped " +
              $"({dropped.ToString(CultureInfo.InvariantCulture)} dropped in all).";
        var record = new AlertRecord(
            unit,
            DateTimeOffset.FromUnixTimeMilliseconds(timeMs),
            OutboxAlerts.Kind,
            AlertSeverity.Medium,
            Stage: null,
            Tag: null,
            Active: active,
            message,
            new Dictionary<string, double>
            {
                ["pending_bytes"] = pendingBytes,
                ["max_bytes"] = _options.MaxBytes,
                ["dropped"] = dropped,
            });
        return RecordPoints.ToPoint(record, _options.Site)!;
    }

    private void LoadMeta()
    {
        using SqliteCommand command = _connection.CreateCommand();
        command.CommandText = "SELECT key, value FROM outbox_meta;";
        using SqliteDataReader r = command.ExecuteReader();
        while (r.Read())
        {
            string value = r.GetString(1);
            switch (r.GetString(0))
            {
                case "dropped":
                    _dropped = long.Parse(value, CultureInfo.InvariantCulture);
                    break;
                case "shedding":
                    _sheddingUnits.UnionWith(value.Split('\n', StringSplitOptions.RemoveEmptyEntries));
                    break;
                case "raised":
                    _raisedTimeMs = long.Parse(value, CultureInfo.InvariantCulture);
                    break;
                case "last":
                    _lastTimeMs = long.Parse(value, CultureInfo.InvariantCulture);
                    break;
                default:
                    break;
            }
        }
    }

    private void SaveMeta(SqliteTransaction transaction, long dropped, IEnumerable<string> shedding, long raised, long last)
    {
        using SqliteCommand command = _connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText =
            "INSERT OR REPLACE INTO outbox_meta(key, value) VALUES('dropped', $d), ('shedding', $s), ('raised', $r), ('last', $l);";
        command.Parameters.AddWithValue("$d", dropped.ToString(CultureInfo.InvariantCulture));
        command.Parameters.AddWithValue("$s", string.Join('\n', shedding));
        command.Parameters.AddWithValue("$r", raised.ToString(CultureInfo.InvariantCulture));
        command.Parameters.AddWithValue("$l", last.ToString(CultureInfo.InvariantCulture));
        command.ExecuteNonQuery();
    }
}

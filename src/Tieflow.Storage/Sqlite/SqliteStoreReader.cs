using Microsoft.Data.Sqlite;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Sqlite;

/// <summary>Reads an embedded store (read-only; the monitor may be writing it at the same time).</summary>
public sealed class SqliteStoreReader : IDisposable
{
    private readonly SqliteConnection _connection;

    private SqliteStoreReader(SqliteConnection connection) => _connection = connection;

    /// <summary>Opens a store file for reading.</summary>
    /// <exception cref="StoreFormatException">The file is missing, not SQLite, or not a Tieflow store.</exception>
    public static SqliteStoreReader Open(string path)
    {
        if (!File.Exists(path))
        {
            throw new StoreFormatException($"{path}: no such file; expected a Tieflow store (the --store of 'tieflow run', default tieflow-data/tieflow.db)");
        }

        SqliteConnection connection;
        try
        {
            connection = SqliteSchema.OpenForReading(path);
            long tables = SqliteSchema.Scalar(connection, "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name IN ('points', 'tieflow_meta');");
            if (tables != 2)
            {
                connection.Dispose();
                throw new StoreFormatException($"{path}: a SQLite database, but not a Tieflow store (expected the tables 'points' and 'tieflow_meta')");
            }
        }
        catch (SqliteException e)
        {
            throw new StoreFormatException($"{path}: not a readable SQLite database ({e.Message.TrimEnd('.')}); expected a Tieflow store", e);
        }

        return new SqliteStoreReader(connection);
    }

    /// <summary>The summary that <c>tieflow show</c> prints.</summary>
    public StoreSummary Summarize()
    {
        DateTimeOffset? from = null;
        DateTimeOffset? to = null;
        using (SqliteCommand span = _connection.CreateCommand())
        {
            span.CommandText = "SELECT min(time), max(time) FROM points;";
            using SqliteDataReader r = span.ExecuteReader();
            if (r.Read() && !r.IsDBNull(0))
            {
                from = DateTimeOffset.FromUnixTimeMilliseconds(r.GetInt64(0));
                to = DateTimeOffset.FromUnixTimeMilliseconds(r.GetInt64(1));
            }
        }

        var counts = new SortedDictionary<string, long>(StringComparer.Ordinal);
        using (SqliteCommand count = _connection.CreateCommand())
        {
            count.CommandText = "SELECT measurement, count(*) FROM points GROUP BY measurement;";
            using SqliteDataReader r = count.ExecuteReader();
            while (r.Read())
            {
                counts[r.GetString(0)] = r.GetInt64(1);
            }
        }

        // SQLite returns the other columns of the row that holds max(time) in each group.
        var latest = Query("SELECT measurement, tags, max(time), fields FROM points GROUP BY measurement, tags ORDER BY measurement, tags;");
        var alerts = Query("SELECT measurement, tags, time, fields FROM points WHERE measurement = 'tieflow_alert' ORDER BY time, tags;");
        return new StoreSummary(from, to, counts, latest, alerts);
    }

    /// <summary>Every point of one measurement in time order.</summary>
    public IReadOnlyList<StoredPoint> ReadMeasurement(string measurement)
    {
        using SqliteCommand command = _connection.CreateCommand();
        command.CommandText = "SELECT measurement, tags, time, fields FROM points WHERE measurement = $m ORDER BY time, tags;";
        command.Parameters.AddWithValue("$m", measurement);
        return Read(command);
    }

    /// <summary>The number of points in the store.</summary>
    public long Count() => SqliteSchema.Scalar(_connection, "SELECT count(*) FROM points;");

    /// <summary>The answer of <c>PRAGMA integrity_check</c> (<c>ok</c> for a sound file).</summary>
    public string IntegrityCheck()
    {
        using SqliteCommand command = _connection.CreateCommand();
        command.CommandText = "PRAGMA integrity_check;";
        return Convert.ToString(command.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture) ?? string.Empty;
    }

    public void Dispose() => _connection.Dispose();

    private List<StoredPoint> Query(string sql)
    {
        using SqliteCommand command = _connection.CreateCommand();
        command.CommandText = sql;
        return Read(command);
    }

    private static List<StoredPoint> Read(SqliteCommand command)
    {
        var result = new List<StoredPoint>();
        using SqliteDataReader r = command.ExecuteReader();
        while (r.Read())
        {
            result.Add(new StoredPoint(
                r.GetString(0),
                DateTimeOffset.FromUnixTimeMilliseconds(r.GetInt64(2)),
                LineProtocol.ParseTags(r.GetString(1)),
                LineProtocol.ParseFields(r.GetString(3))));
        }

        return result;
    }
}

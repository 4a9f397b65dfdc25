using Microsoft.Data.Sqlite;

namespace Tieflow.Storage.Sqlite;

/// <summary>Opening a SQLite file the way both the store and the outbox want it.</summary>
internal static class SqliteSchema
{
    public const int StoreVersion = 1;

    /// <summary>Opens (creating when missing) a database in WAL mode with incremental vacuum.</summary>
    public static SqliteConnection OpenForWriting(string path, bool syncEveryCommit)
    {
        string? folder = System.IO.Path.GetDirectoryName(System.IO.Path.GetFullPath(path));
        if (!string.IsNullOrEmpty(folder))
        {
            Directory.CreateDirectory(folder);
        }

        var connection = new SqliteConnection(new SqliteConnectionStringBuilder
        {
            DataSource = path,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
        }.ToString());
        connection.Open();
        // auto_vacuum only takes effect before the first table is created; on an existing file it is a no-op.
        Execute(connection, "PRAGMA auto_vacuum=INCREMENTAL;");
        Execute(connection, "PRAGMA journal_mode=WAL;");
        Execute(connection, syncEveryCommit ? "PRAGMA synchronous=FULL;" : "PRAGMA synchronous=NORMAL;");
        Execute(connection, "PRAGMA busy_timeout=5000;");
        Execute(connection, "PRAGMA cache_size=-16384;");
        return connection;
    }

    /// <summary>Opens an existing database for reading only.</summary>
    public static SqliteConnection OpenForReading(string path)
    {
        var connection = new SqliteConnection(new SqliteConnectionStringBuilder
        {
            DataSource = path,
            Mode = SqliteOpenMode.ReadOnly,
            Pooling = false,
        }.ToString());
        connection.Open();
        Execute(connection, "PRAGMA busy_timeout=5000;");
        return connection;
    }

    public static void Execute(SqliteConnection connection, string sql, SqliteTransaction? transaction = null)
    {
        using SqliteCommand command = connection.CreateCommand();
        command.CommandText = sql;
        command.Transaction = transaction;
        command.ExecuteNonQuery();
    }

    public static long Scalar(SqliteConnection connection, string sql, SqliteTransaction? transaction = null)
    {
        using SqliteCommand command = connection.CreateCommand();
        command.CommandText = sql;
        command.Transaction = transaction;
        object? value = command.ExecuteScalar();
        return value is null or DBNull ? 0 : Convert.ToInt64(value, System.Globalization.CultureInfo.InvariantCulture);
    }

    /// <summary>Bytes of the file that hold data (pages in use times the page size), not counting free pages.</summary>
    public static long UsedBytes(SqliteConnection connection, SqliteTransaction? transaction = null)
    {
        long pageSize = Scalar(connection, "PRAGMA page_size;", transaction);
        long pages = Scalar(connection, "PRAGMA page_count;", transaction);
        long free = Scalar(connection, "PRAGMA freelist_count;", transaction);
        return (pages - free) * pageSize;
    }
}

namespace Tieflow.Storage.Sqlite;

/// <summary>A file that is missing, not a SQLite database, or not a Tieflow store.</summary>
public sealed class StoreFormatException(string message, Exception? inner = null) : Exception(message, inner);

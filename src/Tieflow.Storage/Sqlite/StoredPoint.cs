namespace Tieflow.Storage.Sqlite;

/// <summary>A point read back from a store: tags and fields by name (numbers as doubles, strings as strings).</summary>
public sealed record StoredPoint(
    string Measurement,
    DateTimeOffset Time,
    IReadOnlyList<KeyValuePair<string, string>> Tags,
    IReadOnlyList<KeyValuePair<string, object>> Fields)
{
    /// <summary>The value of a tag, or null.</summary>
    public string? Tag(string key) => Tags.FirstOrDefault(t => t.Key == key).Value;

    /// <summary>The value of a field, or null.</summary>
    public object? Field(string key) => Fields.FirstOrDefault(f => f.Key == key).Value;
}

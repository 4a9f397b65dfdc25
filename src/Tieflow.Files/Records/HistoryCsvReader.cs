using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// Reads a history CSV (<c>time,tag,value,quality</c>) one record at a time. Strict: a wrong header, a field that is
/// not a UTC time, a number or a quality, or a missing tag throws an <see cref="InputException"/> naming the file,
/// the line and the column.
/// </summary>
public static class HistoryCsvReader
{
    private static readonly string[] Columns = ["time", "tag", "value", "quality"];

    /// <summary>The records of a file, in file order, read lazily (the file stays open while enumerating).</summary>
    /// <exception cref="InputException">The file is missing, unreadable or malformed (thrown while enumerating).</exception>
    public static IEnumerable<SignalSample> Read(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        using var lines = new CsvLines(path, Columns);
        var tags = new Dictionary<string, string>(StringComparer.Ordinal);
        while (lines.Next())
        {
            yield return Parse(lines, tags);
        }
    }

    private static SignalSample Parse(CsvLines lines, Dictionary<string, string> tags)
    {
        DateTimeOffset time = RecordFormat.ParseTime(lines.Field(0))
            ?? throw lines.FieldProblem(0, $"expected an ISO 8601 UTC time such as 2026-03-02T08:00:00Z, found \"{lines.Field(0)}\"");
        ReadOnlySpan<char> tagText = lines.Field(1);
        if (tagText.IsWhiteSpace() || tagText.Length != tagText.Trim().Length)
        {
            throw lines.FieldProblem(1, "expected a tag without surrounding blanks");
        }

        // One string per tag, so that a long file does not allocate a tag per record.
        var lookup = tags.GetAlternateLookup<ReadOnlySpan<char>>();
        if (!lookup.TryGetValue(tagText, out string? tag))
        {
            tag = tagText.ToString();
            tags[tag] = tag;
        }

        double value = RecordFormat.ParseNumber(lines.Field(2))
            ?? throw lines.FieldProblem(2, $"expected a number (invariant culture, '.' as the decimal point), found \"{lines.Field(2)}\"");
        SignalQuality quality = lines.Field(3) switch
        {
            "good" => SignalQuality.Good,
            "uncertain" => SignalQuality.Uncertain,
            "bad" => SignalQuality.Bad,
            var q => throw lines.FieldProblem(3, $"expected good, uncertain or bad, found \"{q}\""),
        };
        if (quality != SignalQuality.Bad && !double.IsFinite(value))
        {
            throw lines.FieldProblem(2, $"a {lines.Field(3)} reading must be a finite number, found \"{lines.Field(2)}\"");
        }

        return new SignalSample(tag, time, value, quality);
    }
}

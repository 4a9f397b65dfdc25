using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// Reads a lab CSV (<c>sampled,reported,stream,component,value</c>). Strict: times must be ISO 8601 with an offset,
/// a result cannot be reported before it was sampled, the value is a fraction in [0, 1]; every problem names the file,
/// the line and the column.
/// </summary>
public static class LabCsvReader
{
    private static readonly string[] Columns = ["sampled", "reported", "stream", "component", "value"];

    /// <summary>The results of a file, in file order, read lazily.</summary>
    /// <exception cref="InputException">The file is missing, unreadable or malformed (thrown while enumerating).</exception>
    public static IEnumerable<LabResult> Read(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        using var lines = new CsvLines(path, Columns);
        while (lines.Next())
        {
            yield return Parse(lines);
        }
    }

    /// <summary>All results of a file.</summary>
    /// <exception cref="InputException">The file is missing, unreadable or malformed.</exception>
    public static IReadOnlyList<LabResult> Load(string path) => Read(path).ToList();

    private static LabResult Parse(CsvLines lines)
    {
        DateTimeOffset sampled = Time(lines, 0);
        DateTimeOffset reported = Time(lines, 1);
        if (reported < sampled)
        {
            throw lines.FieldProblem(1, $"the result is reported ({RecordFormat.Time(reported)}) before the sample was drawn ({RecordFormat.Time(sampled)})");
        }

        string stream = Name(lines, 2);
        string component = Name(lines, 3);
        double value = RecordFormat.ParseNumber(lines.Field(4))
            ?? throw lines.FieldProblem(4, $"expected a number (invariant culture, '.' as the decimal point), found \"{lines.Field(4)}\"");
        if (!(value >= 0 && value <= 1))
        {
            throw lines.FieldProblem(4, $"expected a fraction between 0 and 1, found {lines.Field(4)}");
        }

        return new LabResult(sampled, reported, stream, component, value);
    }

    private static DateTimeOffset Time(CsvLines lines, int index) =>
        RecordFormat.ParseTime(lines.Field(index))
        ?? throw lines.FieldProblem(index, $"expected an ISO 8601 UTC time such as 2026-03-02T08:00:00Z, found \"{lines.Field(index)}\"");

    private static string Name(CsvLines lines, int index)
    {
        ReadOnlySpan<char> text = lines.Field(index);
        if (text.IsWhiteSpace() || text.Length != text.Trim().Length)
        {
            throw lines.FieldProblem(index, "expected a name without surrounding blanks");
        }

        return text.ToString();
    }
}

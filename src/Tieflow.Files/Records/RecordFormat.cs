using System.Globalization;

namespace Tieflow.Files;

/// <summary>Text forms shared by the record files: ISO 8601 UTC times and round-trip numbers, always in the invariant culture.</summary>
internal static class RecordFormat
{
    /// <summary>UTC time with the fraction of a second only when there is one (<c>2026-03-02T08:00:00Z</c>, <c>...T08:00:00.25Z</c>).</summary>
    public const string TimeFormat = "yyyy-MM-dd'T'HH:mm:ss.FFFFFFF'Z'";

    public static string Time(DateTimeOffset time) => time.UtcDateTime.ToString(TimeFormat, CultureInfo.InvariantCulture);

    /// <summary>Shortest text that reads back to the same double ("R").</summary>
    public static string Number(double value) => value.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>Parses an ISO 8601 time that states its offset (Z or +hh:mm); null when it does not.</summary>
    public static DateTimeOffset? ParseTime(ReadOnlySpan<char> text)
    {
        if (text.Length < 20 || !(text[^1] == 'Z' || text[^6] == '+' || text[^6] == '-'))
        {
            return null;
        }

        return DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal, out DateTimeOffset t) ? t.ToUniversalTime() : null;
    }

    public static double? ParseNumber(ReadOnlySpan<char> text) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) ? v : null;

    /// <summary>True when a field can be written without quoting (no comma, quote or line break, no surrounding blanks).</summary>
    public static bool IsPlainField(string text) =>
        text.Length > 0 && text.AsSpan().IndexOfAny(",\"\r\n") < 0 && !char.IsWhiteSpace(text[0]) && !char.IsWhiteSpace(text[^1]);
}

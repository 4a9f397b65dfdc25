using System.Globalization;

namespace Tieflow.Files;

/// <summary>
/// Durations as people write them: <c>500ms</c>, <c>30s</c>, <c>15m</c>, <c>2h</c>, <c>1d</c> (a number, decimals
/// allowed, and a unit), or .NET TimeSpan text (<c>00:00:30</c>, <c>1.06:00:00</c>): the command line's view of the one
/// duration grammar of <see cref="JsonDuration"/>. TimeSpan text with more than 23 hours (<c>30:00:00</c>, which .NET
/// would read as 30 days) is refused.
/// </summary>
public static class DurationText
{
    /// <summary>The forms accepted, for messages.</summary>
    public const string Forms = "a number with a unit (500ms, 30s, 15m, 2h, 1d) or TimeSpan text (00:00:30, 1.06:00:00)";

    /// <summary>
    /// Parses <paramref name="text"/> with the grammar of the input files (<see cref="JsonDuration.TryParse"/>), so that the
    /// command line and the files accept the same durations; on failure <paramref name="error"/> says what was wrong and
    /// shows both forms.
    /// </summary>
    public static bool TryParse(string? text, out TimeSpan value, out string error)
    {
        error = string.Empty;
        string s = text?.Trim() ?? string.Empty;
        if (s.Length == 0)
        {
            value = default;
            error = $"a duration is missing; expected {Forms}";
            return false;
        }

        if (JsonDuration.TryParse(s, out value, out string why))
        {
            return true;
        }

        error = $"'{s}' is not a duration{why}; expected {Forms}";
        return false;
    }

    /// <summary>Parses or throws <see cref="FormatException"/> with the message of <see cref="TryParse"/>.</summary>
    public static TimeSpan Parse(string text) => TryParse(text, out TimeSpan value, out string error) ? value : throw new FormatException(error);

    /// <summary>A duration in the shortest readable form (<c>500ms</c>, <c>30s</c>, <c>1.5h</c>, or TimeSpan text).</summary>
    public static string Format(TimeSpan value)
    {
        double ms = value.TotalMilliseconds;
        return ms switch
        {
            < 1000 => $"{ms.ToString("0.###", CultureInfo.InvariantCulture)}ms",
            < 60_000 => $"{value.TotalSeconds.ToString("0.###", CultureInfo.InvariantCulture)}s",
            < 3_600_000 => $"{value.TotalMinutes.ToString("0.###", CultureInfo.InvariantCulture)}m",
            _ => $"{value.TotalHours.ToString("0.###", CultureInfo.InvariantCulture)}h",
        };
    }
}

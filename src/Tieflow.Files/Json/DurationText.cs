using System.Globalization;
using System.Text.RegularExpressions;

namespace Tieflow.Files;

/// <summary>
/// Durations as people write them: <c>500ms</c>, <c>30s</c>, <c>15m</c>, <c>2h</c>, <c>1d</c> (a number, decimals
/// allowed, and a unit), or .NET TimeSpan text (<c>00:00:30</c>, <c>1.06:00:00</c>). TimeSpan text with more than 23
/// hours (<c>30:00:00</c>, which .NET would read as 30 days) is refused as ambiguous.
/// </summary>
public static partial class DurationText
{
    /// <summary>The forms accepted, for messages.</summary>
    public const string Forms = "a number with a unit (500ms, 30s, 15m, 2h, 1d) or TimeSpan text (00:00:30, 1.06:00:00)";

    /// <summary>Parses <paramref name="text"/>; on failure <paramref name="error"/> says what was wrong and shows both forms.</summary>
    public static bool TryParse(string? text, out TimeSpan value, out string error)
    {
        value = default;
        error = string.Empty;
        string s = text?.Trim() ?? string.Empty;
        if (s.Length == 0)
        {
            error = $"a duration is missing; expected {Forms}";
            return false;
        }

        Match m = WithUnit().Match(s);
        if (m.Success)
        {
            double number = double.Parse(m.Groups[1].Value, NumberStyles.Float, CultureInfo.InvariantCulture);
            double ms = m.Groups[2].Value switch
            {
                "ms" => number,
                "s" => number * 1000,
                "m" or "min" => number * 60_000,
                "h" => number * 3_600_000,
                _ => number * 86_400_000,
            };
            if (!double.IsFinite(ms) || ms > TimeSpan.MaxValue.TotalMilliseconds)
            {
                error = $"'{s}' is too long a duration";
                return false;
            }

            value = TimeSpan.FromMilliseconds(ms);
            return true;
        }

        Match hours = HoursPart().Match(s);
        if (hours.Success && int.Parse(hours.Groups[1].Value, CultureInfo.InvariantCulture) > 23)
        {
            error = $"'{s}' is ambiguous (TimeSpan text reads hours above 23 as days); write {hours.Groups[1].Value}h or the days explicitly, e.g. 1.06:00:00";
            return false;
        }

        if (s.Contains(':', StringComparison.Ordinal) && TimeSpan.TryParse(s, CultureInfo.InvariantCulture, out value))
        {
            return true;
        }

        error = $"'{s}' is not a duration; expected {Forms}";
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

    [GeneratedRegex(@"^([0-9]+(?:\.[0-9]+)?)\s*(ms|s|min|m|h|d)$")]
    private static partial Regex WithUnit();

    [GeneratedRegex(@"^-?([0-9]+):[0-9]+(:[0-9]+(\.[0-9]+)?)?$")]
    private static partial Regex HoursPart();
}

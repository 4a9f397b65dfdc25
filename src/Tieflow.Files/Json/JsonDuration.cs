using System.Globalization;
using System.Text.RegularExpressions;

namespace Tieflow.Files;

/// <summary>
/// Durations in input files: .NET <see cref="TimeSpan"/> text (<c>02:30:00</c>, <c>1.06:00:00</c>, <c>00:00:00.5</c>) or a number
/// with a unit (<c>500ms</c>, <c>30s</c>, <c>15m</c>, <c>2h</c>, <c>3d</c>). Hours above 23 must be written with days:
/// <c>30:00:00</c> is refused rather than read the way .NET reads it (as 30 days).
/// </summary>
public static partial class JsonDuration
{
    private const string Forms = "a duration such as \"02:30:00\" or \"1.06:00:00\" (days.hours:minutes:seconds), or \"500ms\", \"30s\", \"15m\", \"2h\", \"3d\"";

    /// <summary>Reads a duration; records a problem and returns null when the value is not one or lies outside the bounds.</summary>
    /// <param name="value">The JSON value (a string).</param>
    /// <param name="min">Smallest allowed duration (inclusive unless <paramref name="minExclusive"/>).</param>
    /// <param name="max">Largest allowed duration (inclusive).</param>
    /// <param name="minExclusive">Whether <paramref name="min"/> itself is refused.</param>
    public static TimeSpan? AsDuration(this JsonValue value, TimeSpan? min = null, TimeSpan? max = null, bool minExclusive = false)
    {
        if (value.Kind != System.Text.Json.JsonValueKind.String)
        {
            value.Fail($"expected {Forms}, found {JsonValue.Describe(value.Element)}");
            return null;
        }

        string text = value.Element.GetString()!.Trim();
        if (!TryParse(text, out TimeSpan d, out string why))
        {
            value.Fail($"'{text}' is not a duration{why}; expected {Forms}");
            return null;
        }

        TimeSpan low = min ?? TimeSpan.MinValue;
        TimeSpan high = max ?? TimeSpan.MaxValue;
        bool tooLow = minExclusive ? d <= low : d < low;
        if (tooLow || d > high)
        {
            string range = (min, max) switch
            {
                ({ } a, null) => minExclusive ? $"longer than {Format(a)}" : $"at least {Format(a)}",
                (null, { } b) => $"at most {Format(b)}",
                ({ } a, { } b) => minExclusive ? $"longer than {Format(a)} and at most {Format(b)}" : $"between {Format(a)} and {Format(b)}",
                _ => string.Empty,
            };
            value.Fail($"expected a duration {range}, found {Format(d)}");
            return null;
        }

        return d;
    }

    /// <summary>Parses a duration in either accepted form.</summary>
    /// <param name="text">The text.</param>
    /// <param name="duration">The duration, when the text is one.</param>
    /// <param name="why">Why not, as a clause starting with "; " (or empty).</param>
    public static bool TryParse(string text, out TimeSpan duration, out string why)
    {
        ArgumentNullException.ThrowIfNull(text);
        why = string.Empty;
        duration = default;
        Match m = WithUnit().Match(text);
        if (m.Success)
        {
            double n = double.Parse(m.Groups[1].Value, NumberStyles.Float, CultureInfo.InvariantCulture);
            double ms = m.Groups[2].Value switch
            {
                "ms" => n,
                "s" => n * 1e3,
                "m" => n * 60e3,
                "h" => n * 3600e3,
                _ => n * 86400e3,
            };
            if (ms > TimeSpan.MaxValue.TotalMilliseconds)
            {
                why = "; it is too long";
                return false;
            }

            duration = TimeSpan.FromMilliseconds(ms);
            return true;
        }

        Match clock = Clock().Match(text);
        if (!clock.Success)
        {
            return false;
        }

        if (!clock.Groups[1].Success && int.Parse(clock.Groups[2].Value, CultureInfo.InvariantCulture) > 23)
        {
            why = $"; hours above 23 must be written with days (for example {FormatHours(clock.Groups[2].Value, text)})";
            return false;
        }

        return TimeSpan.TryParseExact(text, "c", CultureInfo.InvariantCulture, out duration);
    }

    /// <summary>A duration in .NET's constant form (<c>1.06:00:00</c>).</summary>
    /// <param name="duration">The duration.</param>
    public static string Format(TimeSpan duration) => duration.ToString("c", CultureInfo.InvariantCulture);

    private static string FormatHours(string hours, string text)
    {
        int h = int.Parse(hours, CultureInfo.InvariantCulture);
        return $"\"{h / 24}.{h % 24:00}{text[text.IndexOf(':', StringComparison.Ordinal)..]}\"";
    }

    [GeneratedRegex(@"^([0-9]+(?:\.[0-9]+)?)(ms|s|m|h|d)$")]
    private static partial Regex WithUnit();

    [GeneratedRegex(@"^(\d+\.)?(\d+):\d{2}:\d{2}(\.\d{1,7})?$")]
    private static partial Regex Clock();
}

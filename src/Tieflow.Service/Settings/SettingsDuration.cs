using Tieflow.Files;

namespace Tieflow.Service.Settings;

/// <summary>A duration setting, written in the duration grammar of every input file.</summary>
internal static class SettingsDuration
{
    /// <summary>The duration of a key, or <paramref name="fallback"/> when the key is absent or wrong (then with a problem naming the key).</summary>
    public static TimeSpan Parse(List<SettingsProblem> problems, string keyPath, string? text, TimeSpan fallback)
    {
        ArgumentNullException.ThrowIfNull(problems);
        if (text is null)
        {
            return fallback;
        }

        if (DurationText.TryParse(text, out TimeSpan value, out string error))
        {
            return value;
        }

        problems.Add(new SettingsProblem(keyPath, error));
        return fallback;
    }
}

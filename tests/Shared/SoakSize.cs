using System.Globalization;

namespace Tieflow.Tests.Shared;

/// <summary>
/// Sizes of the reliability tests and what they measure of a process. CI runs them at their small default; the soak
/// scripts in <c>eng/soak</c> set an environment variable to run the same test at full size.
/// </summary>
internal static class SoakSize
{
    /// <summary>
    /// The whole number of at least <paramref name="minimum"/> in environment variable <paramref name="variable"/>, or
    /// <paramref name="ciDefault"/> when it is not set; any other value fails the test with the variable and the value named.
    /// </summary>
    public static int Of(string variable, int ciDefault, int minimum = 1)
    {
        string? text = Environment.GetEnvironmentVariable(variable);
        if (string.IsNullOrWhiteSpace(text))
        {
            return ciDefault;
        }

        if (!int.TryParse(text.Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out int value) || value < minimum)
        {
            throw new InvalidOperationException($"environment variable {variable}: '{text}' is not a whole number of at least {minimum}");
        }

        return value;
    }

    /// <summary>The largest resident set process <paramref name="pid"/> has had (VmHWM), in KiB; null where /proc does not tell.</summary>
    public static long? PeakRssKib(int pid) => Status(pid, "VmHWM:");

    /// <summary>The resident set of process <paramref name="pid"/> now (VmRSS), in KiB; null where /proc does not tell.</summary>
    public static long? RssKib(int pid) => Status(pid, "VmRSS:");

    private static long? Status(int pid, string key)
    {
        try
        {
            foreach (string line in File.ReadLines($"/proc/{pid.ToString(CultureInfo.InvariantCulture)}/status"))
            {
                if (line.StartsWith(key, StringComparison.Ordinal))
                {
                    string[] parts = line[key.Length..].Split([' ', '\t'], StringSplitOptions.RemoveEmptyEntries);
                    return long.Parse(parts[0], CultureInfo.InvariantCulture);
                }
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // Not Linux, or the process has ended.
        }

        return null;
    }
}

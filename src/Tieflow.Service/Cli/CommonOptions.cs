using System.CommandLine;
using Tieflow.Files;

namespace Tieflow.Service.Cli;

/// <summary>Options shared by several commands.</summary>
internal static class CommonOptions
{
    public static Option<string> Case() => new("--case") { Description = "Case file (JSON, see docs/file-formats.md)", Required = true, HelpName = "FILE" };

    /// <summary>A duration option that takes <c>500ms</c>, <c>30s</c>, <c>15m</c>, <c>2h</c> or TimeSpan text (<see cref="DurationText"/>).</summary>
    public static Option<TimeSpan> Duration(string name, string description, TimeSpan defaultValue) => new(name)
    {
        Description = description,
        HelpName = "DURATION",
        DefaultValueFactory = _ => defaultValue,
        CustomParser = ParseDuration,
    };

    /// <summary>As <see cref="Duration(string, string, TimeSpan)"/>, without a default.</summary>
    public static Option<TimeSpan?> OptionalDuration(string name, string description) => new(name)
    {
        Description = description,
        HelpName = "DURATION",
        CustomParser = result => result.Tokens.Count == 0 ? null : ParseDuration(result),
    };

    private static TimeSpan ParseDuration(System.CommandLine.Parsing.ArgumentResult result)
    {
        string text = result.Tokens.Count > 0 ? result.Tokens[0].Value : string.Empty;
        if (DurationText.TryParse(text, out TimeSpan value, out string error))
        {
            return value;
        }

        result.AddError($"{((System.CommandLine.Parsing.OptionResult?)result.Parent)?.Option.Name ?? "duration"}: {error}");
        return default;
    }

    public static Option<bool> Json() => new("--json") { Description = "Print only JSON on standard output" };
}

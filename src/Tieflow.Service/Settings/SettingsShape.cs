using System.Globalization;
using Microsoft.Extensions.Configuration;

namespace Tieflow.Service.Settings;

/// <summary>
/// The keys the <c>Tieflow</c> section may hold and the type of each value. Checked before binding, so that a typo
/// (<c>Tieflow:Stroe</c>) or a value of the wrong type is named by its key path instead of being ignored or stopping the
/// binder at the first one; keys named <c>notes</c> hold free text anywhere. Keys are case-insensitive, as in every
/// configuration layer.
/// </summary>
internal static class SettingsShape
{
    private enum ValueType
    {
        Text,
        Number,
        Integer,
        Port,
        Boolean,
        List,
    }

    private static readonly Dictionary<string, object> Tree = new(StringComparer.OrdinalIgnoreCase)
    {
        ["Plant"] = ValueType.Text,
        ["Units"] = ValueType.List,
        ["Source"] = new Dictionary<string, object>(StringComparer.OrdinalIgnoreCase)
        {
            ["Kind"] = ValueType.Text,
            ["Endpoint"] = ValueType.Text,
            ["User"] = ValueType.Text,
            ["Security"] = ValueType.Text,
            ["Pki"] = ValueType.Text,
            ["Scenario"] = ValueType.Text,
            ["Speed"] = ValueType.Number,
            ["SamplingInterval"] = ValueType.Text,
            ["PublishingInterval"] = ValueType.Text,
            ["KeepAliveInterval"] = ValueType.Text,
            ["ConnectRetryDelay"] = ValueType.Text,
            ["ConnectRetryMaxDelay"] = ValueType.Text,
            ["ConnectAttempts"] = ValueType.Integer,
            ["RequireAllNodes"] = ValueType.Boolean,
        },
        ["Labs"] = new Dictionary<string, object>(StringComparer.OrdinalIgnoreCase)
        {
            ["Folder"] = ValueType.Text,
            ["PollInterval"] = ValueType.Text,
            ["SettleTime"] = ValueType.Text,
        },
        ["Store"] = new Dictionary<string, object>(StringComparer.OrdinalIgnoreCase)
        {
            ["Kind"] = ValueType.Text,
            ["Path"] = ValueType.Text,
            ["Url"] = ValueType.Text,
            ["Org"] = ValueType.Text,
            ["Bucket"] = ValueType.Text,
            ["OutboxPath"] = ValueType.Text,
            ["OutboxMaxBytes"] = ValueType.Integer,
            ["Gzip"] = ValueType.Boolean,
            ["WriteSignals"] = ValueType.Boolean,
        },
        ["Health"] = new Dictionary<string, object>(StringComparer.OrdinalIgnoreCase)
        {
            ["Enabled"] = ValueType.Boolean,
            ["Port"] = ValueType.Port,
        },
    };

    /// <summary>Every unknown key and every value of the wrong type in the <c>Tieflow</c> section.</summary>
    public static IReadOnlyList<SettingsProblem> Check(IConfiguration configuration)
    {
        var problems = new List<SettingsProblem>();
        IConfigurationSection root = configuration.GetSection(TieflowOptions.Section);
        if (root.Value is not null && !root.GetChildren().Any())
        {
            problems.Add(new SettingsProblem(TieflowOptions.Section, $"expected a section of settings, found the value '{root.Value}'"));
            return problems;
        }

        CheckSection(root, TieflowOptions.Section, Tree, problems, keep: null);
        return problems;
    }

    /// <summary>
    /// The configuration with the <c>Tieflow</c> keys whose shape is wrong left out, so that the options bind without
    /// throwing and the validators judge what remains (the shape problems themselves come from <see cref="Check"/>).
    /// </summary>
    public static IConfiguration WithoutBadKeys(IConfiguration configuration)
    {
        var kept = new List<KeyValuePair<string, string?>>();
        IConfigurationSection root = configuration.GetSection(TieflowOptions.Section);
        CheckSection(root, TieflowOptions.Section, Tree, [], kept);
        return new ConfigurationBuilder().AddInMemoryCollection(kept).Build();
    }

    private static void CheckSection(IConfigurationSection section, string path, Dictionary<string, object> known, List<SettingsProblem> problems, List<KeyValuePair<string, string?>>? keep)
    {
        foreach (IConfigurationSection child in section.GetChildren())
        {
            if (string.Equals(child.Key, "notes", StringComparison.OrdinalIgnoreCase))
            {
                continue;
            }

            if (!known.TryGetValue(child.Key, out object? expected))
            {
                problems.Add(new SettingsProblem($"{path}:{child.Key}", $"unknown key; expected one of {string.Join(", ", known.Keys)} (or notes)"));
                continue;
            }

            string name = Canonical(known, child.Key);
            string childPath = $"{path}:{name}";
            if (expected is Dictionary<string, object> nested)
            {
                if (child.Value is not null && !child.GetChildren().Any())
                {
                    if (child.Value.Length > 0)
                    {
                        problems.Add(new SettingsProblem(childPath, $"expected a section with the keys {string.Join(", ", nested.Keys)}, found the value '{child.Value}'"));
                    }

                    continue;
                }

                CheckSection(child, childPath, nested, problems, keep);
                continue;
            }

            var type = (ValueType)expected;
            if (type == ValueType.List)
            {
                CheckList(child, childPath, problems, keep);
                continue;
            }

            if (child.GetChildren().Any())
            {
                problems.Add(new SettingsProblem(childPath, $"expected {Describe(type)}, found a section"));
                continue;
            }

            string? value = child.Value;
            if (value is null)
            {
                continue;
            }

            if (Problem(type, value) is { } message)
            {
                problems.Add(new SettingsProblem(childPath, message));
                continue;
            }

            keep?.Add(new(childPath, value));
        }
    }

    private static void CheckList(IConfigurationSection list, string path, List<SettingsProblem> problems, List<KeyValuePair<string, string?>>? keep)
    {
        if (list.Value is { Length: > 0 } single && !list.GetChildren().Any())
        {
            problems.Add(new SettingsProblem(path, $"expected a list of unit ids (JSON [\"X300\"], or {path}:0=X300), found the value '{single}'"));
            return;
        }

        foreach (IConfigurationSection item in list.GetChildren())
        {
            if (item.GetChildren().Any() || !int.TryParse(item.Key, NumberStyles.None, CultureInfo.InvariantCulture, out _))
            {
                problems.Add(new SettingsProblem($"{path}:{item.Key}", "expected a unit id in a list"));
                continue;
            }

            keep?.Add(new($"{path}:{item.Key}", item.Value));
        }
    }

    private static string? Problem(ValueType type, string value) => type switch
    {
        ValueType.Number => double.TryParse(value, NumberStyles.Float, CultureInfo.InvariantCulture, out double d) && double.IsFinite(d) ? null : $"expected a number, found '{value}'",
        ValueType.Integer => long.TryParse(value, NumberStyles.Integer, CultureInfo.InvariantCulture, out _) ? null : $"expected a whole number, found '{value}'",
        ValueType.Port => int.TryParse(value, NumberStyles.Integer, CultureInfo.InvariantCulture, out int p) ? (p is >= 0 and <= 65535 ? null : $"expected a port from 0 (a free port) to 65535, found {p}") : $"expected a port number, found '{value}'",
        ValueType.Boolean => bool.TryParse(value, out _) ? null : $"expected true or false, found '{value}'",
        _ => null,
    };

    private static string Describe(ValueType type) => type switch
    {
        ValueType.Number => "a number",
        ValueType.Integer => "a whole number",
        ValueType.Port => "a port number",
        ValueType.Boolean => "true or false",
        _ => "a text value",
    };

    private static string Canonical(Dictionary<string, object> known, string key) => known.Keys.First(k => string.Equals(k, key, StringComparison.OrdinalIgnoreCase));
}

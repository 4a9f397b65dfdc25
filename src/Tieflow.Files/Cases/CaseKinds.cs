using System.Text.Json;

namespace Tieflow.Files;

/// <summary>
/// Tells what kind of input file a JSON document is from its top-level keys, and which command takes it. One table,
/// so that <c>tieflow check</c> and every command that reads a case agree; new kinds add a row.
/// </summary>
public static class CaseKinds
{
    public const string System = "system";
    public const string Split = "split case";
    public const string Cascade = "cascade case";
    public const string Design = "design case";
    public const string Reconcile = "reconcile case";
    public const string Plant = "plant";
    public const string Scenario = "scenario";
    public const string Settings = "settings";
    public const string Unknown = "unknown";

    /// <summary>(kind, keys that mark it, command that takes it, or null) in the order they are tried.</summary>
    public static readonly IReadOnlyList<(string Kind, string[] Keys, string? Command)> Table =
    [
        (Plant, ["site", "units"], "tieflow replay --plant FILE (or name it in the settings of tieflow run)"),
        (Scenario, ["plant", "duration"], "tieflow-sim run --scenario FILE"),
        (Settings, ["Tieflow"], "tieflow run --settings FILE"),
        (System, ["components", "equilibrium"], null),
        (Design, ["find"], "tieflow calc design --case FILE"),
        (Cascade, ["arrangement"], "tieflow calc cascade --case FILE"),
        (Split, ["inlets"], "tieflow calc split --case FILE"),
        (Reconcile, ["nodes"], "tieflow calc reconcile --case FILE"),
    ];

    /// <summary>The kind of a document, or <see cref="Unknown"/>.</summary>
    public static string Classify(JsonElement root)
    {
        if (root.ValueKind != JsonValueKind.Object)
        {
            return Unknown;
        }

        foreach (var (kind, keys, _) in Table)
        {
            if (keys.All(k => root.TryGetProperty(k, out _)))
            {
                return kind;
            }
        }

        return Unknown;
    }

    /// <summary>Throws an <see cref="InputException"/> when the document is clearly of another kind than <paramref name="expected"/>, saying which command takes it.</summary>
    public static void Expect(JsonElement root, string path, string expected)
    {
        string kind = Classify(root);
        if (kind == expected || kind == Unknown)
        {
            return;
        }

        var (_, keys, command) = Table.First(t => t.Kind == kind);
        string marker = string.Join(" and ", keys.Select(k => $"\"{k}\""));
        string what = kind == System
            ? $"this is a system file (it has {marker}), not a {expected}; a case names it under \"system\", and 'tieflow check FILE' or 'tieflow describe system FILE' reads it alone"
            : $"this is a {kind} (it has {marker}), not a {expected}; run it with '{command}'";
        throw new InputException(path, "$", what);
    }
}

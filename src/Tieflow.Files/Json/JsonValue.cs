using System.Globalization;
using System.Text.Json;

namespace Tieflow.Files;

/// <summary>
/// A JSON value with its file and path, read strictly: each accessor checks the kind and range and records a problem
/// naming the file, the path and what was expected instead of throwing, so that one pass finds every problem.
/// Accessors return null when the value is missing or wrong.
/// </summary>
public readonly struct JsonValue
{
    public JsonValue(JsonElement element, string file, string path, InputProblems problems)
    {
        Element = element;
        File = file;
        Path = path;
        Problems = problems;
    }

    public JsonElement Element { get; }

    public string File { get; }

    public string Path { get; }

    public InputProblems Problems { get; }

    public JsonValueKind Kind => Element.ValueKind;

    public void Fail(string message) => Problems.Add(File, Path, message);

    /// <summary>Reads an object whose keys must all be in <paramref name="allowedKeys"/> (plus <c>notes</c>); unknown and repeated keys are problems.</summary>
    public JsonObject? AsObject(params string[] allowedKeys)
    {
        if (Element.ValueKind != JsonValueKind.Object)
        {
            Fail($"expected an object, found {Describe(Element)}");
            return null;
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (JsonProperty property in Element.EnumerateObject())
        {
            string at = JsonObject.Child(Path, property.Name);
            if (!seen.Add(property.Name))
            {
                Problems.Add(File, at, "this key appears twice; write it once");
            }
            else if (property.Name != "notes" && !IsSchemaReference(property.Name) && Array.IndexOf(allowedKeys, property.Name) < 0)
            {
                Problems.Add(File, at, $"unknown key '{property.Name}'; expected one of: {string.Join(", ", allowedKeys)} (or 'notes')");
            }
        }

        return new JsonObject(this);
    }

    /// <summary>True for the <c>$schema</c> key of a file's root object, which names the file's JSON Schema for editors and is otherwise ignored.</summary>
    public bool IsSchemaReference(string key) => key == "$schema" && Path == "$";

    public IReadOnlyList<JsonValue>? AsArray(int minimumCount = 0)
    {
        if (Element.ValueKind != JsonValueKind.Array)
        {
            Fail($"expected an array, found {Describe(Element)}");
            return null;
        }

        var items = new List<JsonValue>();
        int i = 0;
        foreach (JsonElement item in Element.EnumerateArray())
        {
            items.Add(new JsonValue(item, File, $"{Path}[{i}]", Problems));
            i++;
        }

        if (items.Count < minimumCount)
        {
            Fail($"expected at least {minimumCount} item{(minimumCount == 1 ? string.Empty : "s")}, found {items.Count}");
            return null;
        }

        return items;
    }

    public string? AsString()
    {
        if (Element.ValueKind != JsonValueKind.String)
        {
            Fail($"expected a string, found {Describe(Element)}");
            return null;
        }

        string s = Element.GetString()!;
        if (string.IsNullOrWhiteSpace(s))
        {
            Fail("expected a non-empty string");
            return null;
        }

        return s;
    }

    /// <summary>A string that must be one of <paramref name="choices"/>.</summary>
    public string? AsChoice(params string[] choices)
    {
        string? s = AsString();
        if (s is not null && Array.IndexOf(choices, s) < 0)
        {
            Fail($"'{s}' is not allowed; expected one of: {string.Join(", ", choices.Select(c => $"\"{c}\""))}");
            return null;
        }

        return s;
    }

    /// <summary>A finite number, optionally with bounds (inclusive unless stated) and a description of what it is.</summary>
    public double? AsNumber(double min = double.NegativeInfinity, double max = double.PositiveInfinity, bool minExclusive = false, string? unit = null)
    {
        if (Element.ValueKind != JsonValueKind.Number || !Element.TryGetDouble(out double v) || !double.IsFinite(v))
        {
            Fail($"expected a finite number{(unit is null ? string.Empty : " in " + unit)}, found {Describe(Element)}");
            return null;
        }

        bool low = minExclusive ? v <= min : v < min;
        if (low || v > max)
        {
            string range = (double.IsNegativeInfinity(min), double.IsPositiveInfinity(max)) switch
            {
                (false, true) => minExclusive ? $"above {Fmt(min)}" : $"at least {Fmt(min)}",
                (true, false) => $"at most {Fmt(max)}",
                _ => minExclusive ? $"above {Fmt(min)} and at most {Fmt(max)}" : $"between {Fmt(min)} and {Fmt(max)}",
            };
            Fail($"expected a number {range}{(unit is null ? string.Empty : " " + unit)}, found {Fmt(v)}");
            return null;
        }

        return v;
    }

    public int? AsInteger(int min = int.MinValue, int max = int.MaxValue)
    {
        if (Element.ValueKind != JsonValueKind.Number || !Element.TryGetInt32(out int v))
        {
            Fail($"expected a whole number, found {Describe(Element)}");
            return null;
        }

        if (v < min || v > max)
        {
            Fail($"expected a whole number between {min} and {max}, found {v}");
            return null;
        }

        return v;
    }

    public static string Describe(JsonElement e) => e.ValueKind switch
    {
        JsonValueKind.Object => "an object",
        JsonValueKind.Array => "an array",
        JsonValueKind.String => $"the string \"{Truncate(e.GetString()!)}\"",
        JsonValueKind.Number => $"the number {e.GetRawText()}",
        JsonValueKind.True or JsonValueKind.False => $"{e.GetRawText()}",
        JsonValueKind.Null => "null",
        _ => "nothing",
    };

    private static string Truncate(string s) => s.Length <= 40 ? s : s[..40] + "...";

    private static string Fmt(double v) => v.ToString("G6", CultureInfo.InvariantCulture);
}

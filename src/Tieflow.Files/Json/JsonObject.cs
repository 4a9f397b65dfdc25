using System.Text.Json;
using System.Text.RegularExpressions;

namespace Tieflow.Files;

/// <summary>An object read by <see cref="JsonValue.AsObject"/>: access to members that records a problem when a required member is missing.</summary>
public readonly partial struct JsonObject
{
    private readonly JsonValue _value;

    public JsonObject(JsonValue value) => _value = value;

    public string Path => _value.Path;

    public string File => _value.File;

    public InputProblems Problems => _value.Problems;

    public bool Has(string key) => _value.Element.TryGetProperty(key, out _);

    /// <summary>The member, or null (with a problem recorded when <paramref name="required"/>).</summary>
    public JsonValue? Get(string key, bool required = true)
    {
        if (_value.Element.TryGetProperty(key, out JsonElement e))
        {
            return new JsonValue(e, _value.File, Child(_value.Path, key), _value.Problems);
        }

        if (required)
        {
            _value.Problems.Add(_value.File, Child(_value.Path, key), "this required key is missing");
        }

        return null;
    }

    /// <summary>Every member in file order.</summary>
    public IEnumerable<(string Key, JsonValue Value)> Members()
    {
        foreach (JsonProperty p in _value.Element.EnumerateObject())
        {
            if (p.Name != "notes" && !_value.IsSchemaReference(p.Name))
            {
                yield return (p.Name, new JsonValue(p.Value, _value.File, Child(_value.Path, p.Name), _value.Problems));
            }
        }
    }

    public void Fail(string message) => _value.Fail(message);

    /// <summary>Records a problem at a member, or at a path below this object such as <c>target.recovery</c> or <c>tieLines[2]</c>.</summary>
    public void Fail(string keyOrRelativePath, string message) =>
        _value.Problems.Add(_value.File, IsRelativePath(keyOrRelativePath) ? $"{_value.Path}.{keyOrRelativePath}" : Child(_value.Path, keyOrRelativePath), message);

    public static string Child(string path, string key) => PlainKey().IsMatch(key) ? $"{path}.{key}" : $"{path}['{key}']";

    private static bool IsRelativePath(string key) => RelativePath().IsMatch(key) && !PlainKey().IsMatch(key);

    [GeneratedRegex(@"^[A-Za-z_][A-Za-z0-9_]*(\[\d+\]|\.[A-Za-z_][A-Za-z0-9_]*)*$")]
    private static partial Regex RelativePath();

    [GeneratedRegex("^[A-Za-z_][A-Za-z0-9_]*$")]
    private static partial Regex PlainKey();
}

using System.Text.RegularExpressions;

namespace Tieflow.Files;

/// <summary>
/// The characters allowed in ids (components, nodes, streams): letters, digits and <c>- _ . , + ( ) ' / :</c> and
/// inner spaces, starting with a letter or digit, at most 64 characters. Ids appear in tables, JSON keys and
/// messages, so brackets, quotes, control characters and the like are refused.
/// </summary>
public static partial class Identifiers
{
    public const int MaxLength = 64;

    public const string Rule = "an id starts with a letter or digit and holds only letters, digits, spaces and - _ . , + ( ) ' / : (at most 64 characters)";

    public static bool IsValid(string id) => id.Length <= MaxLength && Pattern().IsMatch(id) && !id.EndsWith(' ');

    /// <summary>The id when it follows <see cref="Rule"/>; otherwise null with a problem recorded at the value.</summary>
    public static string? Read(JsonValue value)
    {
        string? id = value.AsString();
        if (id is not null && !IsValid(id))
        {
            value.Fail($"'{InputFiles.Printable(id)}' is not a valid id; {Rule}");
            return null;
        }

        return id;
    }

    [GeneratedRegex(@"^[\p{L}\p{N}][\p{L}\p{N} _.,+()'/:-]*$")]
    private static partial Regex Pattern();
}

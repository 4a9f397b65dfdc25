using System.Text.Json;

namespace Tieflow.Files;

/// <summary>Reads a JSON file into a document, turning a missing, special or oversized file or malformed JSON into an <see cref="InputException"/> that names the file and the place.</summary>
public static class JsonInputFile
{
    private static readonly JsonDocumentOptions Options = new() { CommentHandling = JsonCommentHandling.Skip, AllowTrailingCommas = false, MaxDepth = 64 };

    /// <summary>Reads and parses a regular file of at most <paramref name="maxBytes"/> bytes (see <see cref="InputFiles"/>).</summary>
    public static JsonDocument Load(string path, long maxBytes = InputFiles.MaxCaseFileBytes) => Parse(InputFiles.ReadText(path, maxBytes), path);

    public static JsonDocument Parse(string text, string path)
    {
        try
        {
            return JsonDocument.Parse(text, Options);
        }
        catch (JsonException e)
        {
            string where = e.LineNumber is long line ? $"line {line + 1}, position {e.BytePositionInLine + 1}" : "somewhere";
            throw new InputException(path, e.Path ?? "$", $"not valid JSON at {where} (note that NaN and Infinity are not JSON numbers): {FirstSentence(e.Message)}");
        }
    }

    private static string FirstSentence(string message)
    {
        int i = message.IndexOf(" LineNumber", StringComparison.Ordinal);
        return (i > 0 ? message[..i] : message).TrimEnd();
    }
}

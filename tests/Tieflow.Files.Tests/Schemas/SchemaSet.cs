using System.Text.Json;
using Json.Schema;

namespace Tieflow.Files.Tests.Schemas;

/// <summary>The JSON Schemas under schemas/, built once with their cross-file references resolved.</summary>
internal static class SchemaSet
{
    /// <summary>The schema file names, each built after the ones it refers to.</summary>
    public static readonly string[] Names = ["system", "case", "plant", "scenario", "settings"];

    private static readonly Lazy<IReadOnlyDictionary<string, JsonSchema>> Built = new(Build);

    public static JsonSchema Get(string kind) => Built.Value[kind];

    /// <summary>The schema a file names in its <c>$schema</c> key, resolved relative to the file.</summary>
    public static string SchemaFileOf(string file)
    {
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(file), new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip });
        string? reference = doc.RootElement.TryGetProperty("$schema", out JsonElement s) ? s.GetString() : null;
        Assert.False(string.IsNullOrEmpty(reference), $"{file} has no \"$schema\" key");
        return Path.GetFullPath(Path.Combine(Path.GetDirectoryName(file)!, reference!));
    }

    /// <summary>The kind of a schema file (its name without <c>.schema.json</c>).</summary>
    public static string KindOf(string schemaFile) => Path.GetFileName(schemaFile).Replace(".schema.json", string.Empty, StringComparison.Ordinal);

    /// <summary>Validates a JSON text; returns the errors as "instance location: message" lines (empty when valid).</summary>
    public static IReadOnlyList<string> Validate(string kind, string json)
    {
        using JsonDocument doc = JsonDocument.Parse(json, new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip });
        EvaluationResults results = Get(kind).Evaluate(doc.RootElement, new EvaluationOptions { OutputFormat = OutputFormat.Hierarchical });
        if (results.IsValid)
        {
            return [];
        }

        var errors = new List<string>();
        Collect(results, errors);
        return errors.Count > 0 ? errors : ["invalid (no message)"];
    }

    private static void Collect(EvaluationResults r, List<string> errors)
    {
        if (r.Errors is { } es)
        {
            foreach (var e in es)
            {
                errors.Add($"{r.InstanceLocation}: {e.Key}: {e.Value} (at {r.EvaluationPath})");
            }
        }

        if (r.Details is { } ds)
        {
            // Only the failing branches that made their parent fail: a failed "if" only selects "then" or "else".
            foreach (EvaluationResults d in ds.Where(d => !d.IsValid && !d.EvaluationPath.ToString().EndsWith("/if", StringComparison.Ordinal)))
            {
                Collect(d, errors);
            }
        }
    }

    private static IReadOnlyDictionary<string, JsonSchema> Build()
    {
        var options = new BuildOptions { SchemaRegistry = new SchemaRegistry() };
        var schemas = new Dictionary<string, JsonSchema>(StringComparer.Ordinal);
        foreach (string name in Names)
        {
            string path = Path.Combine(RepositoryPaths.Schemas, name + ".schema.json");
            // FromText with a "file://" URI rather than FromFile or new Uri(path): with a base URI made from a bare path,
            // JsonSchema.Net 8.0.5 resolved "other.schema.json#/$defs/x" to the other schema's root instead of the definition.
            schemas[name] = JsonSchema.FromText(File.ReadAllText(path), options, new Uri(new Uri(path).AbsoluteUri));
        }

        return schemas;
    }
}

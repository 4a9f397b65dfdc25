namespace Tieflow.Files.Tests.Schemas;

/// <summary>Every JSON file in config-samples/ names its schema first and validates against it.</summary>
public sealed class SampleSchemaTests
{
    public static TheoryData<string> Samples()
    {
        var data = new TheoryData<string>();
        foreach (string file in Directory.GetFiles(RepositoryPaths.ConfigSamples, "*.json", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetRelativePath(RepositoryPaths.ConfigSamples, file));
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Samples))]
    public void Sample_NamesItsSchemaFirst_AndValidates(string name)
    {
        string file = Path.Combine(RepositoryPaths.ConfigSamples, name);
        string text = File.ReadAllText(file);
        Assert.StartsWith("{" + Environment.NewLine + "  \"$schema\": \"", text.ReplaceLineEndings(), StringComparison.Ordinal);
        string schemaFile = SchemaSet.SchemaFileOf(file);
        Assert.True(File.Exists(schemaFile), $"{name}: $schema names {schemaFile}, which does not exist");
        string kind = SchemaSet.KindOf(schemaFile);
        string expected = name.EndsWith(".plant.json", StringComparison.Ordinal) ? "plant"
            : name.EndsWith(".scenario.json", StringComparison.Ordinal) ? "scenario"
            : name.EndsWith(".system.json", StringComparison.Ordinal) ? "system"
            : name.EndsWith(".case.json", StringComparison.Ordinal) ? "case"
            : "settings";
        Assert.Equal(expected, kind);

        IReadOnlyList<string> errors = SchemaSet.Validate(kind, text);

        Assert.True(errors.Count == 0, $"{name}:{Environment.NewLine}{string.Join(Environment.NewLine, errors)}");
    }

    [Fact]
    public void Samples_AreThere()
    {
        Assert.True(Samples().Count >= 25);
    }
}

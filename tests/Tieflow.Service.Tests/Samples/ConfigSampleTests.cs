using System.Text.Json;

namespace Tieflow.Service.Tests.Samples;

/// <summary>Every file in config-samples/ must stay valid, and every case must run to a result.</summary>
public sealed class ConfigSampleTests
{
    public static TheoryData<string> SampleFiles()
    {
        var data = new TheoryData<string>();
        foreach (string file in Directory.GetFiles(RepositoryPaths.ConfigSamples, "*.json", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetRelativePath(RepositoryPaths.ConfigSamples, file));
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(SampleFiles))]
    public void Check_EverySample_IsValid(string name)
    {
        CliRun run = CliRun.Of("check", Path.Combine(RepositoryPaths.ConfigSamples, name));
        Assert.True(run.ExitCode == 0, $"{name}: {run.Error}");
    }

    [Theory]
    [MemberData(nameof(SampleFiles))]
    public void Calc_EveryCaseSample_RunsAndPrintsJson(string name)
    {
        string path = Path.Combine(RepositoryPaths.ConfigSamples, name);
        string? verb = CalcVerb(path);
        if (verb is null)
        {
            return;
        }

        CliRun run = CliRun.Of("calc", verb, "--case", path, "--json");

        Assert.True(run.ExitCode == 0, $"{name}: exit {run.ExitCode}: {run.Error}");
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        Assert.Equal(JsonValueKind.Object, doc.RootElement.ValueKind);
    }

    [Fact]
    public void Samples_CoverEveryModelAndEveryCaseKind()
    {
        string[] texts = Directory.GetFiles(RepositoryPaths.ConfigSamples, "*.json", SearchOption.AllDirectories).Select(File.ReadAllText).ToArray();
        foreach (string model in new[] { "\"tie-lines\"", "\"nrtl\"", "\"uniquac\"", "\"distribution\"" })
        {
            Assert.Contains(texts, t => t.Contains("\"model\": " + model, StringComparison.Ordinal));
        }

        foreach (string find in new[] { "\"stages\"", "\"solvent\"", "\"minimum-solvent\"" })
        {
            Assert.Contains(texts, t => t.Contains("\"find\": " + find, StringComparison.Ordinal));
        }

        Assert.Contains(texts, t => t.Contains("\"crosscurrent\"", StringComparison.Ordinal));
        Assert.Contains(texts, t => t.Contains("\"countercurrent\"", StringComparison.Ordinal));
        Assert.Contains(texts, t => t.Contains("\"inlets\"", StringComparison.Ordinal));
    }

    private static string? CalcVerb(string path)
    {
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(path));
        JsonElement root = doc.RootElement;
        bool Has(string key) => root.TryGetProperty(key, out _);
        return Has("find") ? "design" : Has("arrangement") ? "cascade" : Has("inlets") ? "split" : Has("nodes") ? "reconcile" : null;
    }
}

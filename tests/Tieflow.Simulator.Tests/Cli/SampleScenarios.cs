using System.Text.Json.Nodes;

namespace Tieflow.Simulator.Tests.Cli;

/// <summary>The demo scenarios of config-samples, copied to a temporary folder with a longer step (so that a test runs them in seconds) and the plant path made absolute.</summary>
internal static class SampleScenarios
{
    public static IEnumerable<string> Names => Directory.GetFiles(Path.Combine(RepositoryPaths.ConfigSamples, "scenarios"), "*.scenario.json").Select(Path.GetFileName).Order(StringComparer.Ordinal)!;

    public static string Copy(TempFolder folder, string name, string step = "00:01:00", string? duration = null, int? seed = null, string? target = null)
    {
        string source = Path.Combine(RepositoryPaths.ConfigSamples, "scenarios", name);
        JsonObject json = JsonNode.Parse(File.ReadAllText(source))!.AsObject();
        json.Remove("$schema");
        json["plant"] = Path.GetFullPath(Path.Combine(Path.GetDirectoryName(source)!, (string)json["plant"]!));
        json["step"] = step;
        if (duration is not null)
        {
            json["duration"] = duration;
        }

        if (seed is int s)
        {
            json["seed"] = s;
        }

        target = folder.PathOf(target ?? name);
        File.WriteAllText(target, json.ToJsonString());
        return target;
    }
}

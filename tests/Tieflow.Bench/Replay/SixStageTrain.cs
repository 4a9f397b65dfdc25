using System.Text.Json;
using System.Text.Json.Nodes;

namespace Tieflow.Bench.Replay;

/// <summary>
/// A six-stage train for the window benchmark: train X300 of the demo plant (config-samples/brackenmoor.plant.json)
/// lengthened to six mixer-settlers, with a raffinate analyzer and a thermometer on each new stage, and the clean
/// scenario's normal changes of X300 (config-samples/scenarios/clean.scenario.json). Invented, like the demo.
/// </summary>
internal static class SixStageTrain
{
    public const string UnitId = "X600";

    /// <summary>Writes the plant file and the scenario into <paramref name="folder"/>; returns the scenario's path.</summary>
    public static string Write(string root, string folder)
    {
        string samples = Path.Combine(root, "config-samples");
        JsonNode plant = JsonNode.Parse(File.ReadAllText(Path.Combine(samples, "brackenmoor.plant.json")))!;
        JsonObject train = plant["units"]!.AsArray().Single(u => (string?)u!["id"] == "X300")!.AsObject().DeepClone().AsObject();
        train["id"] = UnitId;
        train["stages"] = 6;
        train["system"] = Path.Combine(samples, (string)train["system"]!);
        train["nominal"]!["efficiency"] = new JsonArray(0.92, 0.9, 0.9, 0.88, 0.88, 0.86);
        train.Remove("notes");
        JsonArray instruments = train["instruments"]!.AsArray();
        foreach (JsonNode? i in instruments)
        {
            i!["tag"] = ((string)i["tag"]!).Replace("-3", "-6", StringComparison.Ordinal);
            i["node"] = ((string)i["node"]!).Replace("X300.", "X600.", StringComparison.Ordinal);
        }

        // The analyzer of the fourth raffinate now reads an interstage stream; two more stages get theirs, and a
        // thermometer each.
        JsonObject fourth = instruments.Single(i => (string?)i!["stream"] == "raffinate-4")!.AsObject();
        foreach ((int stage, string tag) in new[] { (5, "AI-615"), (6, "AI-619") })
        {
            JsonObject analyzer = fourth.DeepClone().AsObject();
            analyzer["tag"] = tag;
            analyzer["node"] = $"ns=2;s=X600.{tag.Replace("-", string.Empty, StringComparison.Ordinal)}.PV";
            analyzer["stream"] = $"raffinate-{stage}";
            analyzer["updateOffset"] = stage == 5 ? "00:04:30" : "00:05:30";
            instruments.Add(analyzer);
            JsonObject thermometer = instruments.Single(i => (string?)i!["tag"] == "TI-604")!.DeepClone().AsObject();
            thermometer["tag"] = $"TI-60{stage}";
            thermometer["node"] = $"ns=2;s=X600.TI60{stage}.PV";
            thermometer["stage"] = stage;
            instruments.Add(thermometer);
        }

        var sixPlant = new JsonObject { ["site"] = "Brackenmoor-six", ["units"] = new JsonArray(train) };
        File.WriteAllText(Path.Combine(folder, "six.plant.json"), sixPlant.ToJsonString());

        JsonNode scenario = JsonNode.Parse(File.ReadAllText(Path.Combine(samples, "scenarios", "clean.scenario.json")))!;
        var disturbances = new JsonArray();
        foreach (JsonNode? d in scenario["disturbances"]!.AsArray())
        {
            if ((string?)d!["unit"] == "X300")
            {
                JsonNode copy = d.DeepClone();
                copy["unit"] = UnitId;
                disturbances.Add(copy);
            }
        }

        scenario["plant"] = "six.plant.json";
        scenario["disturbances"] = disturbances;
        scenario.AsObject().Remove("$schema");
        scenario.AsObject().Remove("notes");
        string path = Path.Combine(folder, "six.scenario.json");
        File.WriteAllText(path, scenario.ToJsonString(new JsonSerializerOptions { WriteIndented = true }));
        return path;
    }
}

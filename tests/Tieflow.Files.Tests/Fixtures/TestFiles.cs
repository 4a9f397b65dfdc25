using System.Text.Json.Nodes;

namespace Tieflow.Files.Tests;

// Tieflow.Files has a JsonObject of its own; the tests build files with the System.Text.Json one.
using JsonObject = System.Text.Json.Nodes.JsonObject;

/// <summary>Small plant, scenario and case files for the tests, built on the system files of config-samples/ (copied into a temporary folder).</summary>
internal static class TestFiles
{
    /// <summary>The mass-basis tie-line system (acetone, water, 1,1,2-trichloroethane at 298.15 K).</summary>
    public const string TceSystem = "tce.system.json";

    /// <summary>The mass-basis distribution system of the demo column (metal-complex, aqueous, extractant at 303.15 K).</summary>
    public const string LeachSystem = "leach.system.json";

    /// <summary>The mole-basis NRTL system (ethanol, water, ethyl acetate; 323.15 K to 363.15 K).</summary>
    public const string NrtlSystem = "nrtl.system.json";

    /// <summary>The good plant written by <see cref="Prepare"/>.</summary>
    public const string Plant = "test.plant.json";

    /// <summary>Copies the system files and writes the good plant into the folder.</summary>
    public static void Prepare(TempFolder folder)
    {
        folder.Write(TceSystem, File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "acetone-water-tce.system.json")));
        folder.Write(LeachSystem, File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "leach-demo.distribution.system.json")));
        folder.Write(NrtlSystem, File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "ethanol-water-ethyl-acetate.nrtl.system.json")));
        folder.Write(Plant, GoodPlant().ToJsonString());
    }

    /// <summary>A unit X300 of four counter-current mixer-settlers with a feed flow meter, a raffinate analyzer and a stage temperature.</summary>
    public static JsonObject MixerSettlerUnit() => Obj("""
        {
          "id": "X300", "kind": "mixer-settler", "system": "tce.system.json", "arrangement": "countercurrent", "stages": 4,
          "nominal": {
            "feed": { "flow": 1000, "composition": { "acetone": 0.3, "water": 0.7, "trichloroethane": 0 } },
            "solvent": { "flow": 450, "composition": { "acetone": 0, "water": 0, "trichloroethane": 1 } },
            "temperature": 298.15, "efficiency": [0.92, 0.9, 0.9, 0.88]
          },
          "holdup": { "mixer": 450, "settler": 1800 },
          "spec": { "raffinateSolute": 0.085 },
          "instruments": [
            { "tag": "FI-301", "node": "ns=2;s=X300.FI301.PV", "stream": "feed", "quantity": "flow", "unit": "kg/h", "sigma": 8, "range": [0, 2500] },
            { "tag": "AI-312", "node": "ns=2;s=X300.AI312.PV", "stream": "raffinate-2", "quantity": "fraction", "component": "acetone", "unit": "percent", "sigma": 0.05, "range": [0, 50], "deadTime": "00:04:00", "updateInterval": "00:06:00", "updateOffset": "00:01:30" },
            { "tag": "TI-302", "node": "ns=2;s=X300.TI302.PV", "stage": 2, "quantity": "temperature", "unit": "degC", "sigma": 0.2, "range": [0, 60] }
          ],
          "labs": [{ "stream": "raffinate", "component": "acetone" }]
        }
        """);

    /// <summary>A column C200 of five theoretical stages with terminal instruments.</summary>
    public static JsonObject ColumnUnit() => Obj("""
        {
          "id": "C200", "kind": "column", "system": "leach.system.json", "stages": 5,
          "nominal": {
            "feed": { "flow": 5000, "composition": { "metal-complex": 0.012, "aqueous": 0.988, "extractant": 0 } },
            "solvent": { "flow": 2500, "composition": { "metal-complex": 0, "aqueous": 0, "extractant": 1 } },
            "temperature": 303.15, "efficiency": 1.0
          },
          "holdup": { "mixer": 260, "settler": 60 },
          "spec": { "raffinateSolute": 0.0008 },
          "column": { "height": 8.5 },
          "instruments": [
            { "tag": "FI-201", "node": "ns=2;s=C200.FI201.PV", "stream": "feed", "quantity": "flow", "unit": "t/h", "sigma": 0.04, "range": [0, 10] },
            { "tag": "AI-203", "node": "ns=2;s=C200.AI203.PV", "stream": "raffinate", "quantity": "fraction", "component": "metal-complex", "unit": "ppm", "sigma": 10, "range": [0, 5000], "deadTime": "2m", "updateInterval": "5m" }
          ]
        }
        """);

    /// <summary>A plant with the mixer-settler unit only.</summary>
    public static JsonObject GoodPlant() => new() { ["$schema"] = "schemas/plant.schema.json", ["site"] = "Testmoor", ["units"] = new JsonArray(MixerSettlerUnit()) };

    /// <summary>A plant with the given units.</summary>
    public static JsonObject PlantOf(params JsonObject[] units) => new() { ["site"] = "Testmoor", ["units"] = new JsonArray(units) };

    /// <summary>A scenario of one day on <see cref="Plant"/> with a fault of every kind and a disturbance of every kind.</summary>
    public static JsonObject GoodScenario() => Obj("""
        {
          "$schema": "schemas/scenario.schema.json",
          "plant": "test.plant.json", "start": "2026-03-02T00:00:00Z", "duration": "1.00:00:00", "step": "00:00:01", "seed": 7,
          "faults": [
            { "kind": "stage-efficiency", "stage": 3, "start": "10:00:00", "ramp": "02:00:00", "value": 0.55 },
            { "kind": "stage-efficiency", "start": "2h", "value": 0.8 },
            { "kind": "entrainment", "stage": 2, "start": "20:00:00", "end": "23:00:00", "fraction": 0.02 },
            { "kind": "entrainment", "stage": 1, "start": "1h", "fraction": 0.01, "carried": "extract" },
            { "kind": "solvent-loss", "unit": "X300", "start": "06:00:00", "fraction": 0.01 },
            { "kind": "sensor-bias", "tag": "FI-301", "start": "08:00:00", "bias": 40 },
            { "kind": "sensor-drift", "tag": "FI-301", "start": "08:00:00", "end": "12:00:00", "perHour": 2.5 },
            { "kind": "sensor-stuck", "tag": "TI-302", "start": "500ms" },
            { "kind": "signal-bad", "tag": "AI-312", "start": "03:00:00", "end": "04:00:00" },
            { "kind": "signal-frozen", "tag": "AI-312", "start": "05:00:00", "end": "05:30:00" }
          ],
          "disturbances": [
            { "kind": "feed-flow", "start": "04:00:00", "value": 1100, "ramp": "00:30:00" },
            { "kind": "feed-solute", "start": "05:00:00", "value": 0.28 },
            { "kind": "solvent-flow", "start": "06:00:00", "value": 480 },
            { "kind": "temperature", "unit": "X300", "start": "07:00:00", "value": 299.15 }
          ],
          "lab": { "interval": "04:00:00", "delay": "01:30:00", "sigma": 0.0005 }
        }
        """);

    public static JsonObject Obj(string json) => JsonNode.Parse(json)!.AsObject();

    /// <summary>A copy of a node with a change applied.</summary>
    public static JsonObject With(this JsonObject node, Action<JsonObject> change)
    {
        JsonObject copy = node.DeepClone().AsObject();
        change(copy);
        return copy;
    }

    /// <summary>The first unit of a plant.</summary>
    public static JsonObject Unit0(this JsonObject plant) => plant["units"]![0]!.AsObject();

    /// <summary>Instrument <paramref name="i"/> of the first unit of a plant.</summary>
    public static JsonObject Instrument(this JsonObject plant, int i) => plant.Unit0()["instruments"]![i]!.AsObject();

    /// <summary>Fault <paramref name="i"/> of a scenario.</summary>
    public static JsonObject Fault(this JsonObject scenario, int i) => scenario["faults"]![i]!.AsObject();
}

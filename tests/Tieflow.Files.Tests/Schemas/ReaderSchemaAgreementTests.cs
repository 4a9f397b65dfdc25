using System.Text.Json;
using System.Text.Json.Nodes;
using static Tieflow.Files.Tests.TestFiles;

namespace Tieflow.Files.Tests.Schemas;

// Tieflow.Files has a JsonObject of its own; the tests build files with the System.Text.Json one.
using JsonObject = System.Text.Json.Nodes.JsonObject;

/// <summary>
/// A table of good and bad files: the reader and the JSON Schema must agree on accepting or refusing each. Rows marked
/// reader-only break a rule the schema cannot express (it needs another file, a sum, a uniqueness across objects or the
/// solved nominal cascade); for them only the reader is asserted, and the schema is expected to accept the file.
/// </summary>
public sealed class ReaderSchemaAgreementTests
{
    private const bool Accept = true;
    private const bool Refuse = false;

    private static readonly Dictionary<string, Row> Rows = BuildRows();

    public static TheoryData<string> RowNames()
    {
        var data = new TheoryData<string>();
        foreach (string name in Rows.Keys)
        {
            data.Add(name);
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(RowNames))]
    public void ReaderAndSchema_Agree(string name)
    {
        Row row = Rows[name];
        using var folder = new TempFolder();
        Prepare(folder);
        string text = row.Json.ToJsonString(new JsonSerializerOptions { WriteIndented = true });
        string file = folder.Write($"row.{row.Kind}.json", text);

        IReadOnlyList<InputProblem> problems = ReadProblems(row.Kind, file);
        IReadOnlyList<string> schemaErrors = SchemaSet.Validate(row.Kind, text);

        Assert.True(row.Accepted == (problems.Count == 0), $"{name}: the reader should {(row.Accepted ? "accept" : "refuse")} it; problems: {string.Join(" | ", problems)}");
        bool schemaAccepts = row.ReaderOnly || row.Accepted;
        Assert.True(schemaAccepts == (schemaErrors.Count == 0), $"{name}: the schema should {(schemaAccepts ? "accept" : "refuse")} it; errors: {string.Join(" | ", schemaErrors)}");
    }

    [Fact]
    public void Table_CoversEveryKindWithGoodAndBadFiles()
    {
        foreach (string kind in new[] { "plant", "scenario", "system", "case" })
        {
            Assert.Contains(Rows.Values, r => r.Kind == kind && r.Accepted);
            Assert.Contains(Rows.Values, r => r.Kind == kind && !r.Accepted && !r.ReaderOnly);
            Assert.Contains(Rows.Values, r => r.Kind == kind && !r.Accepted && r.ReaderOnly);
        }

        Assert.True(Rows.Count >= 30);
    }

    private static IReadOnlyList<InputProblem> ReadProblems(string kind, string file)
    {
        try
        {
            switch (kind)
            {
                case "plant":
                    PlantReader.Load(file);
                    break;
                case "scenario":
                    ScenarioReader.Load(file);
                    break;
                case "system":
                    SystemFileReader.Load(file);
                    break;
                default:
                    using (JsonDocument doc = JsonDocument.Parse(File.ReadAllText(file)))
                    {
                        bool Has(string key) => doc.RootElement.TryGetProperty(key, out _);
                        if (Has("find"))
                        {
                            CaseReader.LoadDesign(file);
                        }
                        else if (Has("arrangement"))
                        {
                            CaseReader.LoadCascade(file);
                        }
                        else if (Has("inlets"))
                        {
                            CaseReader.LoadSplit(file);
                        }
                        else if (Has("nodes"))
                        {
                            ReconcileCaseReader.Load(file);
                        }
                        else
                        {
                            return [new InputProblem(file, "$", "not a case")];
                        }
                    }

                    break;
            }

            return [];
        }
        catch (InputException e)
        {
            return e.Problems;
        }
    }

    private static Dictionary<string, Row> BuildRows()
    {
        var rows = new List<Row>();
        void Add(string name, string kind, JsonObject json, bool accepted, bool readerOnly = false) => rows.Add(new Row(name, kind, json, accepted, readerOnly));

        // Plant files.
        JsonObject plant = GoodPlant();
        Add("plant: the good mixer-settler plant", "plant", plant, Accept);
        Add("plant: a column unit beside it", "plant", plant.With(p => p["units"]!.AsArray().Add(ColumnUnit())), Accept);
        Add("plant: notes in every object", "plant", plant.With(p =>
        {
            p["notes"] = "n";
            p.Unit0()["notes"] = new JsonObject { ["any"] = 1 };
            p.Instrument(0)["notes"] = "n";
            p.Unit0()["nominal"]!["feed"]!["composition"]!["notes"] = "n";
            p.Unit0()["alerts"] = new JsonObject { ["notes"] = "n", ["onDelay"] = "00:10:00", ["entrainmentFraction"] = 0.01 };
        }), Accept);
        Add("plant: the system inline", "plant", plant.With(p => p.Unit0()["system"] = JsonNode.Parse(File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "acetone-water-tce.system.json")))!.AsObject().With(s => s.Remove("$schema"))), Accept);
        Add("plant: durations with units ('4m', '6m', '90s')", "plant", plant.With(p =>
        {
            p.Instrument(1)["deadTime"] = "4m";
            p.Instrument(1)["updateInterval"] = "6m";
            p.Instrument(1)["updateOffset"] = "90s";
        }), Accept);
        Add("plant: unknown key in a unit", "plant", plant.With(p => p.Unit0()["stagez"] = 4), Refuse);
        Add("plant: unknown key in an instrument", "plant", plant.With(p => p.Instrument(0)["sigmaa"] = 1), Refuse);
        Add("plant: $schema below the root", "plant", plant.With(p => p.Unit0()["$schema"] = "x"), Refuse);
        Add("plant: missing hold-up", "plant", plant.With(p => p.Unit0().Remove("holdup")), Refuse);
        Add("plant: zero stages", "plant", plant.With(p => p.Unit0()["stages"] = 0), Refuse);
        Add("plant: spec of 1", "plant", plant.With(p => p.Unit0()["spec"]!["raffinateSolute"] = 1), Refuse);
        Add("plant: flow unit m3/h", "plant", plant.With(p => p.Instrument(0)["unit"] = "m3/h"), Refuse);
        Add("plant: analyzer in kg/h", "plant", plant.With(p => p.Instrument(1)["unit"] = "kg/h"), Refuse);
        Add("plant: temperature in degF", "plant", plant.With(p => p.Instrument(2)["unit"] = "degF"), Refuse);
        Add("plant: analyzer without dead time", "plant", plant.With(p => p.Instrument(1).Remove("deadTime")), Refuse);
        Add("plant: analyzer without update interval", "plant", plant.With(p => p.Instrument(1).Remove("updateInterval")), Refuse);
        Add("plant: flow meter with a dead time", "plant", plant.With(p => p.Instrument(0)["deadTime"] = "00:01:00"), Refuse);
        Add("plant: temperature on a stream", "plant", plant.With(p => p.Instrument(2)["stream"] = "feed"), Refuse);
        Add("plant: flow meter on a stage", "plant", plant.With(p => p.Instrument(0)["stage"] = 1), Refuse);
        Add("plant: flow meter with a component", "plant", plant.With(p => p.Instrument(0)["component"] = "water"), Refuse);
        Add("plant: tag with a space", "plant", plant.With(p => p.Instrument(0)["tag"] = "FI 301"), Refuse);
        Add("plant: NodeId not in text form", "plant", plant.With(p => p.Instrument(0)["node"] = "X300.FI301"), Refuse);
        Add("plant: unknown stream name", "plant", plant.With(p => p.Instrument(0)["stream"] = "raffinat"), Refuse);
        Add("plant: range of three numbers", "plant", plant.With(p => p.Instrument(0)["range"] = new JsonArray(0, 1000, 2500)), Refuse);
        Add("plant: sigma of zero", "plant", plant.With(p => p.Instrument(0)["sigma"] = 0), Refuse);
        Add("plant: dead time 30:00:00", "plant", plant.With(p => p.Instrument(1)["deadTime"] = "30:00:00"), Refuse);
        Add("plant: unknown alert setting", "plant", plant.With(p => p.Unit0()["alerts"] = new JsonObject { ["onDelayy"] = "00:10:00" }), Refuse);
        Add("plant: column without dimensions", "plant", PlantOf(ColumnUnit().With(u => u.Remove("column"))), Refuse);
        Add("plant: mixer-settler with column dimensions", "plant", plant.With(p => p.Unit0()["column"] = new JsonObject { ["height"] = 3 }), Refuse);
        Add("plant: cross-current column", "plant", PlantOf(ColumnUnit().With(u => u["arrangement"] = "crosscurrent")), Refuse);
        Add("plant: column measuring extract-3", "plant", PlantOf(ColumnUnit().With(u => u["instruments"]![0]!["stream"] = "extract-3")), Refuse);
        Add("plant: column measuring raffinate-2 (reader-only)", "plant", PlantOf(ColumnUnit().With(u => u["instruments"]![0]!["stream"] = "raffinate-2")), Refuse, readerOnly: true);
        Add("plant: raffinate-9 beyond the stages (reader-only)", "plant", plant.With(p => p.Instrument(1)["stream"] = "raffinate-9"), Refuse, readerOnly: true);
        Add("plant: temperature of stage 9 of 4 (reader-only)", "plant", plant.With(p => p.Instrument(2)["stage"] = 9), Refuse, readerOnly: true);
        Add("plant: duplicate tag (reader-only)", "plant", plant.With(p => p.Instrument(2)["tag"] = "FI-301"), Refuse, readerOnly: true);
        Add("plant: duplicate NodeId (reader-only)", "plant", plant.With(p => p.Instrument(2)["node"] = "ns=2;s=X300.FI301.PV"), Refuse, readerOnly: true);
        Add("plant: range excludes the nominal feed (reader-only)", "plant", plant.With(p => p.Instrument(0)["range"] = new JsonArray(0, 500)), Refuse, readerOnly: true);
        Add("plant: range high below low (reader-only)", "plant", plant.With(p => p.Instrument(0)["range"] = new JsonArray(2500, 0)), Refuse, readerOnly: true);
        Add("plant: unknown component (reader-only)", "plant", plant.With(p => p.Instrument(1)["component"] = "benzene"), Refuse, readerOnly: true);
        Add("plant: update offset not below the interval (reader-only)", "plant", plant.With(p => p.Instrument(1)["updateOffset"] = "00:06:00"), Refuse, readerOnly: true);
        Add("plant: dead time above one day (reader-only)", "plant", plant.With(p => p.Instrument(1)["deadTime"] = "2.00:00:00"), Refuse, readerOnly: true);
        Add("plant: efficiency list of the wrong length (reader-only)", "plant", plant.With(p => p.Unit0()["nominal"]!["efficiency"] = new JsonArray(0.9, 0.9)), Refuse, readerOnly: true);
        Add("plant: duplicate unit id (reader-only)", "plant", plant.With(p => p["units"]!.AsArray().Add(MixerSettlerUnit().With(u => u["instruments"] = new JsonArray()))), Refuse, readerOnly: true);
        Add("plant: missing system file (reader-only)", "plant", plant.With(p => p.Unit0()["system"] = "nowhere.system.json"), Refuse, readerOnly: true);

        // Scenario files (on the good plant).
        JsonObject scenario = GoodScenario();
        Add("scenario: a fault and a disturbance of every kind", "scenario", scenario, Accept);
        Add("scenario: '2h' and '500ms'", "scenario", scenario.With(s =>
        {
            s["duration"] = "30h";
            s["step"] = "500ms";
        }), Accept);
        Add("scenario: start with an offset", "scenario", scenario.With(s => s["start"] = "2026-03-02T01:00:00+01:00"), Accept);
        Add("scenario: unknown top-level key", "scenario", scenario.With(s => s["seeds"] = 1), Refuse);
        Add("scenario: start without a zone", "scenario", scenario.With(s => s["start"] = "2026-03-02T00:00:00"), Refuse);
        Add("scenario: duration 30:00:00", "scenario", scenario.With(s => s["duration"] = "30:00:00"), Refuse);
        Add("scenario: duration in weeks", "scenario", scenario.With(s => s["duration"] = "2w"), Refuse);
        Add("scenario: seed 1.5", "scenario", scenario.With(s => s["seed"] = 1.5), Refuse);
        Add("scenario: missing step", "scenario", scenario.With(s => s.Remove("step")), Refuse);
        Add("scenario: unknown fault kind", "scenario", scenario.With(s => s.Fault(0)["kind"] = "stage-fouling"), Refuse);
        Add("scenario: stage-efficiency with an end", "scenario", scenario.With(s => s.Fault(0)["end"] = "20:00:00"), Refuse);
        Add("scenario: entrainment without a stage", "scenario", scenario.With(s => s.Fault(2).Remove("stage")), Refuse);
        Add("scenario: entrainment carried 'both'", "scenario", scenario.With(s => s.Fault(3)["carried"] = "both"), Refuse);
        Add("scenario: solvent loss of everything", "scenario", scenario.With(s => s.Fault(4)["fraction"] = 1), Refuse);
        Add("scenario: sensor bias without a bias", "scenario", scenario.With(s => s.Fault(5).Remove("bias")), Refuse);
        Add("scenario: sensor bias with perHour", "scenario", scenario.With(s => s.Fault(5)["perHour"] = 1), Refuse);
        Add("scenario: signal-bad without an end", "scenario", scenario.With(s => s.Fault(8).Remove("end")), Refuse);
        Add("scenario: feed solute of 1", "scenario", scenario.With(s => s["disturbances"]![1]!["value"] = 1), Refuse);
        Add("scenario: temperature of 50 K", "scenario", scenario.With(s => s["disturbances"]![3]!["value"] = 50), Refuse);
        Add("scenario: lab without sigma", "scenario", scenario.With(s => s["lab"]!.AsObject().Remove("sigma")), Refuse);
        Add("scenario: unknown tag (reader-only)", "scenario", scenario.With(s => s.Fault(5)["tag"] = "FI-999"), Refuse, readerOnly: true);
        Add("scenario: unknown unit (reader-only)", "scenario", scenario.With(s => s.Fault(4)["unit"] = "X999"), Refuse, readerOnly: true);
        Add("scenario: stage 9 of 4 (reader-only)", "scenario", scenario.With(s => s.Fault(2)["stage"] = 9), Refuse, readerOnly: true);
        Add("scenario: end before start (reader-only)", "scenario", scenario.With(s => s.Fault(2)["end"] = "19:00:00"), Refuse, readerOnly: true);
        Add("scenario: start after the run (reader-only)", "scenario", scenario.With(s => s.Fault(5)["start"] = "1.02:00:00"), Refuse, readerOnly: true);
        Add("scenario: step above one hour (reader-only)", "scenario", scenario.With(s => s["step"] = "2h"), Refuse, readerOnly: true);
        Add("scenario: missing plant file (reader-only)", "scenario", scenario.With(s => s["plant"] = "nowhere.plant.json"), Refuse, readerOnly: true);

        // System files.
        JsonObject system = Obj(File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "acetone-water-tce.system.json")));
        JsonObject nrtl = Obj(File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "ethanol-water-ethyl-acetate.nrtl.system.json")));
        JsonObject uniquac = Obj(File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "benzene-heptane-acetonitrile.uniquac.system.json")));
        JsonObject distribution = Obj(File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "dilute-demo.distribution.system.json")));
        Add("system: tie lines", "system", system, Accept);
        Add("system: nrtl without temperatureRange", "system", nrtl.With(s => s["equilibrium"]!.AsObject().Remove("temperatureRange")), Accept);
        Add("system: two components", "system", system.With(s => s["components"]!.AsArray().RemoveAt(2)), Refuse);
        Add("system: two solutes", "system", system.With(s => s["components"]![1]!["role"] = "solute"), Refuse);
        Add("system: basis 'volume'", "system", system.With(s => s["basis"] = "volume"), Refuse);
        Add("system: blank name", "system", system.With(s => s["name"] = "   "), Refuse);
        Add("system: molar mass 0", "system", system.With(s => s["components"]![0]!["molarMass"] = 0), Refuse);
        Add("system: one tie line", "system", system.With(s =>
        {
            JsonArray lines = s["equilibrium"]!["tieLines"]!.AsArray();
            while (lines.Count > 1)
            {
                lines.RemoveAt(1);
            }
        }), Refuse);
        Add("system: nrtl with a temperature key", "system", nrtl.With(s => s["equilibrium"]!["temperature"] = 343), Refuse);
        Add("system: tie lines with pairs", "system", system.With(s => s["equilibrium"]!["pairs"] = new JsonArray()), Refuse);
        Add("system: nrtl pair in kJ/mol", "system", nrtl.With(s => s["equilibrium"]!["pairs"]![0]!["units"] = "kJ/mol"), Refuse);
        Add("system: nrtl pair without alpha", "system", nrtl.With(s => s["equilibrium"]!["pairs"]![0]!.AsObject().Remove("alpha")), Refuse);
        Add("system: uniquac component without r", "system", uniquac.With(s => s["components"]![0]!.AsObject().Remove("r")), Refuse);
        Add("system: distribution with k and isotherm", "system", distribution.With(s => s["equilibrium"]!["isotherm"] = new JsonArray(new JsonArray(0, 0), new JsonArray(1, 1.5))), Refuse);
        Add("system: distribution with neither", "system", distribution.With(s => s["equilibrium"]!.AsObject().Remove("k")), Refuse);
        Add("system: fractions summing to 0.9 (reader-only)", "system", system.With(s => s["equilibrium"]!["tieLines"]![0]!["raffinate"]!["water"] = s["equilibrium"]!["tieLines"]![0]!["raffinate"]!["water"]!.GetValue<double>() - 0.1), Refuse, readerOnly: true);
        Add("system: duplicate component id (reader-only)", "system", system.With(s => s["components"]![1]!["id"] = "acetone"), Refuse, readerOnly: true);
        Add("system: composition of an unknown component (reader-only)", "system", system.With(s =>
        {
            JsonObject r = s["equilibrium"]!["tieLines"]![0]!["raffinate"]!.AsObject();
            JsonNode? w = r["water"];
            r.Remove("water");
            r["wasser"] = w!.DeepClone();
        }), Refuse, readerOnly: true);
        Add("system: nrtl pair missing (reader-only)", "system", nrtl.With(s => s["equilibrium"]!["pairs"]!.AsArray().RemoveAt(0)), Refuse, readerOnly: true);

        // Case files (on the tie-line system).
        JsonObject feed = Obj("""{ "flow": 1000, "composition": { "acetone": 0.3, "water": 0.7, "trichloroethane": 0 } }""");
        JsonObject solvent = Obj("""{ "flow": 450, "composition": { "acetone": 0, "water": 0, "trichloroethane": 1 } }""");
        var split = new JsonObject { ["$schema"] = "x", ["system"] = TceSystem, ["temperature"] = 298.15, ["inlets"] = new JsonArray(feed.DeepClone(), solvent.DeepClone()) };
        var cascade = new JsonObject { ["system"] = TceSystem, ["temperature"] = 298.15, ["arrangement"] = "countercurrent", ["stages"] = 4, ["feed"] = feed.DeepClone(), ["solvent"] = solvent.DeepClone(), ["efficiency"] = 0.9 };
        JsonObject design = cascade.With(c =>
        {
            c.Remove("stages");
            c["find"] = "stages";
            c["target"] = new JsonObject { ["raffinateFraction"] = 0.02 };
        });
        JsonObject reconcile = Obj("""
            { "components": ["a", "b"], "nodes": ["N1", "N2"],
              "streams": [{ "id": "S1", "to": "N1" }, { "id": "S2", "from": "N1", "to": "N2" }, { "id": "S3", "from": "N2" }],
              "measurements": [
                { "stream": "S1", "quantity": "flow", "value": 100, "sigma": 2 },
                { "stream": "S3", "quantity": "flow", "value": 98, "relativeSigma": 0.02 },
                { "stream": "S1", "quantity": "fraction", "component": "a", "value": 0.3, "sigma": 0.005 }],
              "significance": 0.05, "maxIterations": 50 }
            """);
        Add("case: split", "case", split, Accept);
        Add("case: split with the system inline", "case", split.With(c => c["system"] = system.With(s => s.Remove("$schema"))), Accept);
        Add("case: cascade with per-stage efficiencies", "case", cascade.With(c => c["efficiency"] = new JsonArray(0.9, 0.9, 0.85, 0.8)), Accept);
        Add("case: design for stages", "case", design, Accept);
        Add("case: design for solvent", "case", design.With(c =>
        {
            c["find"] = "solvent";
            c["stages"] = 4;
            c["solvent"]!.AsObject().Remove("flow");
            c["target"] = new JsonObject { ["recovery"] = 0.95 };
        }), Accept);
        Add("case: reconcile", "case", reconcile, Accept);
        Add("case: flow-only reconcile", "case", reconcile.With(c =>
        {
            c.Remove("components");
            c["measurements"]!.AsArray().RemoveAt(2);
        }), Accept);
        Add("case: none of inlets, arrangement, find, nodes", "case", split.With(c => c.Remove("inlets")), Refuse);
        Add("case: split with an unknown key", "case", split.With(c => c["stages"] = 2), Refuse);
        Add("case: inline system with $schema", "case", split.With(c => c["system"] = system.DeepClone()), Refuse);
        Add("case: negative inlet flow", "case", split.With(c => c["inlets"]![0]!["flow"] = -1), Refuse);
        Add("case: cascade without stages", "case", cascade.With(c => c.Remove("stages")), Refuse);
        Add("case: cascade arrangement 'parallel'", "case", cascade.With(c => c["arrangement"] = "parallel"), Refuse);
        Add("case: cascade with zero solvent", "case", cascade.With(c => c["solvent"]!["flow"] = 0), Refuse);
        Add("case: cascade efficiency 1.2", "case", cascade.With(c => c["efficiency"] = 1.2), Refuse);
        Add("case: design for stages without solvent flow", "case", design.With(c => c["solvent"]!.AsObject().Remove("flow")), Refuse);
        Add("case: design for solvent without stages", "case", design.With(c => c["find"] = "solvent"), Refuse);
        Add("case: design with both targets", "case", design.With(c => c["target"]!["recovery"] = 0.9), Refuse);
        Add("case: design without a target", "case", design.With(c => c.Remove("target")), Refuse);
        Add("case: design raffinate fraction of 1", "case", design.With(c => c["target"]!["raffinateFraction"] = 1), Refuse);
        Add("case: design recovery of 1", "case", design.With(c => c["target"] = new JsonObject { ["recovery"] = 1 }), Refuse);
        Add("case: design with a list of efficiencies but no stages", "case", design.With(c => c["efficiency"] = new JsonArray(0.9, 0.9)), Refuse);
        Add("case: reconcile node given twice", "case", reconcile.With(c => c["nodes"]!.AsArray().Add("N1")), Refuse);
        Add("case: reconcile stream without ends", "case", reconcile.With(c => c["streams"]!.AsArray().Add(new JsonObject { ["id"] = "S4" })), Refuse);
        Add("case: reconcile sigma and relativeSigma", "case", reconcile.With(c => c["measurements"]![0]!["relativeSigma"] = 0.01), Refuse);
        Add("case: reconcile flow with a component", "case", reconcile.With(c => c["measurements"]![0]!["component"] = "a"), Refuse);
        Add("case: reconcile fraction without components", "case", reconcile.With(c => c.Remove("components")), Refuse);
        Add("case: reconcile fraction of 1.5", "case", reconcile.With(c => c["measurements"]![2]!["value"] = 1.5), Refuse);
        Add("case: reconcile significance 0.6", "case", reconcile.With(c => c["significance"] = 0.6), Refuse);
        Add("case: temperature outside the data (reader-only)", "case", cascade.With(c => c["temperature"] = 320), Refuse, readerOnly: true);
        Add("case: efficiency list of the wrong length (reader-only)", "case", cascade.With(c => c["efficiency"] = new JsonArray(0.9, 0.9)), Refuse, readerOnly: true);
        Add("case: target above the feed's solute (reader-only)", "case", design.With(c => c["target"]!["raffinateFraction"] = 0.5), Refuse, readerOnly: true);
        Add("case: feed without solute (reader-only)", "case", cascade.With(c =>
        {
            c["feed"]!["composition"]!["acetone"] = 0;
            c["feed"]!["composition"]!["water"] = 1;
        }), Refuse, readerOnly: true);
        Add("case: reconcile unknown stream (reader-only)", "case", reconcile.With(c => c["measurements"]![0]!["stream"] = "S9"), Refuse, readerOnly: true);
        Add("case: reconcile stream to an unknown node (reader-only)", "case", reconcile.With(c => c["streams"]![0]!["to"] = "N9"), Refuse, readerOnly: true);
        Add("case: reconcile same quantity twice (reader-only)", "case", reconcile.With(c => c["measurements"]!.AsArray().Add(new JsonObject { ["stream"] = "S1", ["quantity"] = "flow", ["value"] = 101, ["sigma"] = 2 })), Refuse, readerOnly: true);

        return rows.ToDictionary(r => r.Name, StringComparer.Ordinal);
    }

    private sealed record Row(string Name, string Kind, JsonObject Json, bool Accepted, bool ReaderOnly);
}

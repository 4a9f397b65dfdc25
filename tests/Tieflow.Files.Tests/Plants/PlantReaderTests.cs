using System.Text.Json.Nodes;
using Tieflow.Core.Plant;
using static Tieflow.Files.Tests.TestFiles;

namespace Tieflow.Files.Tests.Plants;

// Tieflow.Files has a JsonObject of its own; the tests build files with the System.Text.Json one.
using JsonObject = System.Text.Json.Nodes.JsonObject;

public sealed class PlantReaderTests
{
    [Fact]
    public void Load_GoodPlant_ReadsUnitsAndInstruments()
    {
        using var folder = new TempFolder();
        Prepare(folder);

        PlantDescription plant = PlantReader.Load(Path.Combine(folder.Path, Plant));

        UnitDescription unit = Assert.Single(plant.Units);
        Assert.Equal("X300", unit.Id);
        Assert.Equal(4, unit.Stages);
        Assert.Equal(3, unit.Instruments.Count);
        Instrument analyzer = unit.FindInstrument("AI-312")!;
        Assert.Equal(UnitStream.RaffinateOf(2), analyzer.Stream);
        Assert.Equal(TimeSpan.FromMinutes(4), analyzer.DeadTime);
        Assert.Equal(TimeSpan.FromMinutes(6), analyzer.UpdateInterval);
        Assert.Equal(TimeSpan.FromSeconds(90), analyzer.UpdateOffset);
        Assert.Equal(2, unit.FindInstrument("TI-302")!.Stage);
    }

    [Fact]
    public void Load_EveryProblem_IsListedAtOnceWithFilePathAndExpectation()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        JsonObject x300 = MixerSettlerUnit().With(u =>
        {
            JsonArray list = u["instruments"]!.AsArray();
            list[0]!["range"] = new JsonArray(0, 500);
            list.Add(Obj("""{ "tag": "FI-301", "node": "ns=2;s=X300.FI302.PV", "stream": "solvent", "quantity": "flow", "unit": "kg/h", "sigma": 4 }"""));
            list.Add(Obj("""{ "tag": "FI-303", "node": "ns=2;s=X300.FI301.PV", "stream": "solvent", "quantity": "flow", "unit": "kg/h", "sigma": 4 }"""));
            list.Add(Obj("""{ "tag": "AI-317", "node": "ns=2;s=X300.AI317.PV", "stream": "raffinate-7", "quantity": "fraction", "component": "acetone", "unit": "percent", "sigma": 0.05, "deadTime": "4m", "updateInterval": "6m" }"""));
            list.Add(Obj("""{ "tag": "FI-399", "node": "ns=2;s=X300.FI399.PV", "stream": "spent-solvent", "quantity": "flow", "unit": "kg/h", "sigma": 4 }"""));
            list.Add(Obj("""{ "tag": "TI-309", "node": "ns=2;s=X300.TI309.PV", "stage": 9, "quantity": "temperature", "unit": "K", "sigma": 0.2 }"""));
            list.Add(Obj("""{ "tag": "AI-320", "node": "ns=2;s=X300.AI320.PV", "stream": "extract", "quantity": "fraction", "component": "benzene", "unit": "ppm", "sigma": 10, "deadTime": "4m", "updateInterval": "6m" }"""));
            list.Add(Obj("""{ "tag": "AI-321", "node": "ns=2;s=X300.AI321.PV", "stream": "extract", "quantity": "fraction", "component": "water", "unit": "ppm", "sigma": 10 }"""));
        });
        JsonObject c200 = ColumnUnit().With(u => u["instruments"]!.AsArray().Add(Obj("""{ "tag": "FI-205", "node": "ns=2;s=C200.FI205.PV", "stream": "raffinate-2", "quantity": "flow", "unit": "kg/h", "sigma": 10 }""")));
        JsonObject e500 = Obj("""
            {
              "id": "E500", "kind": "mixer-settler", "system": "nrtl.system.json", "stages": 2,
              "nominal": {
                "feed": { "flow": 100, "composition": { "ethanol": 0.06, "water": 0.94, "ethyl-acetate": 0 } },
                "solvent": { "flow": 60, "composition": { "ethanol": 0, "water": 0, "ethyl-acetate": 1 } },
                "temperature": 343
              },
              "holdup": { "mixer": 100, "settler": 300 },
              "spec": { "raffinateSolute": 0.02 },
              "instruments": [
                { "tag": "FI-501", "node": "ns=2;s=E500.FI501.PV", "stream": "feed", "quantity": "flow", "unit": "kmol/h", "sigma": 1 },
                { "tag": "FI-502", "node": "ns=2;s=E500.FI502.PV", "stream": "solvent", "quantity": "flow", "unit": "kg/h", "sigma": 20 }
              ]
            }
            """);
        string file = folder.Write("bad.plant.json", PlantOf(x300, c200, e500).ToJsonString());

        var e = Assert.Throws<InputException>(() => PlantReader.Load(file));

        (string Path, string Expectation)[] expected =
        [
            ("$.units[0].instruments[0].range", "excludes the nominal value 1000 kg/h"),
            ("$.units[0].instruments[3].tag", "tag \"FI-301\" is already used at $.units[0].instruments[0]"),
            ("$.units[0].instruments[4].node", "NodeId \"ns=2;s=X300.FI301.PV\" is already used at $.units[0].instruments[0]"),
            ("$.units[0].instruments[5].stream", "stream \"raffinate-7\" names stage 7, but the unit has stages 1 to 4"),
            ("$.units[0].instruments[6].stream", "unknown stream \"spent-solvent\"; expected feed, solvent, raffinate, extract, raffinate-N or extract-N"),
            ("$.units[0].instruments[7].stage", "expected a whole number between 1 and 4, found 9"),
            ("$.units[0].instruments[8].component", "unknown component \"benzene\""),
            ("$.units[0].instruments[9]", "an analyzer (a fraction instrument) needs \"deadTime\""),
            ("$.units[1].instruments[2].stream", "a column's interstage streams cannot be measured"),
            ("$.units[2].instruments[1].unit", "'kg/h' is a mass flow, but the system is on a mole basis"),
        ];
        Assert.All(e.Problems, p => Assert.Equal(file, p.File));
        foreach ((string path, string expectation) in expected)
        {
            Assert.True(
                e.Problems.Any(p => p.JsonPath == path && p.Message.Contains(expectation, StringComparison.Ordinal)),
                $"no problem at {path} saying '{expectation}'; found:{Environment.NewLine}{string.Join(Environment.NewLine, e.Problems)}");
        }

        Assert.True(expected.Length == e.Problems.Count, string.Join(Environment.NewLine, e.Problems));
        Assert.Contains("missing: deadTime and updateInterval", e.Problems.Single(p => p.JsonPath == "$.units[0].instruments[9]").Message, StringComparison.Ordinal);
        Assert.Contains("expected one of: \"kmol/h\"", e.Problems.Single(p => p.JsonPath == "$.units[2].instruments[1].unit").Message, StringComparison.Ordinal);
        Assert.Contains(e.Problems.Count + " problems", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Load_Sample_ConvertsEngineeringUnitsOfReadingsSigmasAndRanges()
    {
        PlantDescription plant = PlantReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json"));
        UnitDescription x300 = plant.FindUnit("X300")!;
        UnitDescription c200 = plant.FindUnit("C200")!;

        // FI-305 in t/h: 1 t = 1000 kg (BIPM, The International System of Units (SI Brochure), 9th ed. 2019, Table 8).
        Instrument fi305 = x300.FindInstrument("FI-305")!;
        Assert.Equal(0.008 * 1000, fi305.SigmaBase, 9);
        Assert.Equal(2.5 * 1000, fi305.RangeHighBase, 9);

        // TI-301 in degC: T/K = t/degC + 273.15 (SI Brochure, 9th ed. 2019, section 2.3.1). A sigma is a difference: no offset.
        Instrument ti301 = x300.FindInstrument("TI-301")!;
        Assert.Equal(0.2, ti301.SigmaBase, 12);
        Assert.Equal(273.15, ti301.RangeLowBase, 9);
        Assert.Equal(333.15, ti301.RangeHighBase, 9);
        Assert.Equal(298.15, ti301.Unit.ToBase(25.0), 9);

        // AI-317 in ppm (1 ppm = 1e-6, common practice, no source) and AI-311 in percent (% = 0.01, SI Brochure 9th ed. 2019, section 5.4.7).
        Instrument ai317 = x300.FindInstrument("AI-317")!;
        Assert.Equal(300e-6, ai317.SigmaBase, 15);
        Assert.Equal(0.06, ai317.RangeHighBase, 12);
        Instrument ai311 = x300.FindInstrument("AI-311")!;
        Assert.Equal(0.0005, ai311.SigmaBase, 15);
        Assert.Equal(0.5, ai311.RangeHighBase, 12);

        // FI-202 in kg/s: 1 h = 3600 s (SI Brochure 9th ed. 2019, Table 8). TI-201 in K: no change.
        Instrument fi202 = c200.FindInstrument("FI-202")!;
        Assert.Equal(0.006 * 3600, fi202.SigmaBase, 9);
        Assert.Equal(2 * 3600, fi202.RangeHighBase, 9);
        Instrument ti201 = c200.FindInstrument("TI-201")!;
        Assert.Equal(273.15, ti201.RangeLowBase, 12);
        Assert.Equal(0.2, ti201.SigmaBase, 12);
    }
}

using System.Text.Json.Nodes;
using Tieflow.Core.Scenarios;
using static Tieflow.Files.Tests.TestFiles;

namespace Tieflow.Files.Tests.Scenarios;

// Tieflow.Files has a JsonObject of its own; the tests build files with the System.Text.Json one.
using JsonObject = System.Text.Json.Nodes.JsonObject;

public sealed class ScenarioReaderTests
{
    [Fact]
    public void Load_GoodScenario_ReadsFaultsDisturbancesAndLab()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        string file = folder.Write("good.scenario.json", GoodScenario().ToJsonString());

        Scenario s = ScenarioReader.Load(file);

        Assert.Equal(new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero), s.Start);
        Assert.Equal(TimeSpan.FromDays(1), s.Duration);
        Assert.Equal(10, s.Faults.Count);
        Assert.Equal(4, s.Disturbances.Count);
        Fault entrainment = s.Faults[3];
        Assert.Equal(FaultKind.Entrainment, entrainment.Kind);
        Assert.Equal(EntrainedPhase.Extract, entrainment.Carried);
        Assert.Equal(TimeSpan.FromHours(1), entrainment.Start);
        Assert.Equal("X300", s.Faults[5].Unit);
        Assert.Equal(TimeSpan.FromMilliseconds(500), s.Faults[7].Start);
        Assert.Equal(TimeSpan.FromHours(4), s.Lab!.Interval);
    }

    [Fact]
    public void Load_DurationsWithUnits_AreAccepted()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        string file = folder.Write("units.scenario.json", GoodScenario().With(s =>
        {
            s["duration"] = "2h";
            s["step"] = "500ms";
            s["faults"] = new JsonArray(Obj("""{ "kind": "sensor-stuck", "tag": "FI-301", "start": "45m", "end": "1.5h" }"""));
            s["disturbances"] = new JsonArray();
            s["lab"] = Obj("""{ "interval": "30m", "delay": "600s", "sigma": 0.001 }""");
        }).ToJsonString());

        Scenario s = ScenarioReader.Load(file);

        Assert.Equal(TimeSpan.FromHours(2), s.Duration);
        Assert.Equal(TimeSpan.FromMilliseconds(500), s.Step);
        Assert.Equal(TimeSpan.FromMinutes(45), s.Faults[0].Start);
        Assert.Equal(TimeSpan.FromMinutes(90), s.Faults[0].End);
        Assert.Equal(TimeSpan.FromMinutes(10), s.Lab!.Delay);
    }

    [Fact]
    public void Load_EveryProblem_IsListedAtOnceWithFilePathAndExpectation()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        JsonObject bad = GoodScenario().With(s =>
        {
            s["faults"] = new JsonArray(
                Obj("""{ "kind": "sensor-bias", "tag": "FI-999", "start": "08:00:00", "bias": 4 }"""),
                Obj("""{ "kind": "stage-efficiency", "unit": "X999", "start": "08:00:00", "value": 0.5 }"""),
                Obj("""{ "kind": "entrainment", "stage": 9, "start": "08:00:00", "fraction": 0.02 }"""),
                Obj("""{ "kind": "entrainment", "stage": 2, "start": "20:00:00", "end": "19:00:00", "fraction": 0.02 }"""),
                Obj("""{ "kind": "solvent-loss", "start": "1.02:00:00", "fraction": 0.01 }"""),
                Obj("""{ "kind": "signal-bad", "tag": "AI-312", "start": "03:00:00", "end": "1.06:00:00" }"""),
                Obj("""{ "kind": "sensor-drift", "tag": "FI-301", "start": "30:00:00", "perHour": 1 }"""));
            s["disturbances"] = new JsonArray(
                Obj("""{ "kind": "feed-flow", "unit": "X999", "start": "04:00:00", "value": 1100 }"""),
                Obj("""{ "kind": "temperature", "start": "2.00:00:00", "value": 300 }"""));
        });
        string file = folder.Write("bad.scenario.json", bad.ToJsonString());

        var e = Assert.Throws<InputException>(() => ScenarioReader.Load(file));

        (string Path, string Expectation)[] expected =
        [
            ("$.faults[0].tag", "unknown tag \"FI-999\"; it is not an instrument of the plant file"),
            ("$.faults[1].unit", "unknown unit \"X999\"; the plant has \"X300\""),
            ("$.faults[2].stage", "expected a whole number between 1 and 4, found 9"),
            ("$.faults[3].end", "the fault ends (19:00:00) before or when it starts (20:00:00)"),
            ("$.faults[4].start", "1.02:00:00 is after the end of the run (1.00:00:00 from its start)"),
            ("$.faults[5].end", "1.06:00:00 is after the end of the run"),
            ("$.faults[6].start", "'30:00:00' is not a duration; hours above 23 must be written with days (for example \"1.06:00:00\")"),
            ("$.disturbances[0].unit", "unknown unit \"X999\""),
            ("$.disturbances[1].start", "2.00:00:00 is after the end of the run"),
        ];
        Assert.All(e.Problems, p => Assert.Equal(file, p.File));
        foreach ((string path, string expectation) in expected)
        {
            Assert.True(
                e.Problems.Any(p => p.JsonPath == path && p.Message.Contains(expectation, StringComparison.Ordinal)),
                $"no problem at {path} saying '{expectation}'; found:{Environment.NewLine}{string.Join(Environment.NewLine, e.Problems)}");
        }

        Assert.True(expected.Length == e.Problems.Count, string.Join(Environment.NewLine, e.Problems));
    }

    [Fact]
    public void Load_TwoUnitPlant_NeedsTheUnitOfFaultsWithoutTag()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        folder.Write("two.plant.json", PlantOf(MixerSettlerUnit(), ColumnUnit()).ToJsonString());
        string file = folder.Write("two.scenario.json", GoodScenario().With(s =>
        {
            s["plant"] = "two.plant.json";
            s["faults"] = new JsonArray(
                Obj("""{ "kind": "solvent-loss", "start": "06:00:00", "fraction": 0.01 }"""),
                Obj("""{ "kind": "sensor-bias", "tag": "FI-201", "start": "06:00:00", "bias": 0.1 }"""),
                Obj("""{ "kind": "sensor-bias", "unit": "X300", "tag": "FI-201", "start": "06:00:00", "bias": 0.1 }"""));
            s["disturbances"] = new JsonArray(Obj("""{ "kind": "feed-flow", "unit": "C200", "start": "04:00:00", "value": 5200 }"""));
        }).ToJsonString());

        var e = Assert.Throws<InputException>(() => ScenarioReader.Load(file));

        Assert.Collection(
            e.Problems,
            p => Assert.Equal(("$.faults[0]", true), (p.JsonPath, p.Message.Contains("the plant has 2 units; name the one this applies to with \"unit\"", StringComparison.Ordinal))),
            p => Assert.Equal(("$.faults[2].tag", true), (p.JsonPath, p.Message.Contains("tag \"FI-201\" belongs to unit \"C200\", not to \"X300\"", StringComparison.Ordinal))));
    }

    [Fact]
    public void Load_ProblemsOfThePlantFile_AreReportedWithThePlantFile()
    {
        using var folder = new TempFolder();
        Prepare(folder);
        string plant = folder.Write("broken.plant.json", GoodPlant().With(p => p.Instrument(0)["sigma"] = -1).ToJsonString());
        string file = folder.Write("s.scenario.json", GoodScenario().With(s => s["plant"] = "broken.plant.json").ToJsonString());

        var e = Assert.Throws<InputException>(() => ScenarioReader.Load(file));

        Assert.Contains(e.Problems, p => p.File == plant && p.JsonPath == "$.units[0].instruments[0].sigma");
    }
}

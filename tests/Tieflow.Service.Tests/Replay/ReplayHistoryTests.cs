using System.Globalization;
using System.Text.Json.Nodes;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Service.Replay;
using Tieflow.Simulator;

namespace Tieflow.Service.Tests.Replay;

/// <summary>
/// What real history exports hold, through <c>tieflow replay</c>: rows out of order within seconds, rows exported twice,
/// tags the plant does not have, lines that are not records. The analysis must be the same as for the clean history.
/// </summary>
public sealed class ReplayHistoryTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public void ReorderBuffer_SortsWithinTheWindow_DropsRepeatsAndLateRows()
    {
        var buffer = new ReorderBuffer(TimeSpan.FromSeconds(10));
        var released = new List<SignalSample>();
        void Add(string tag, int rank, double seconds, double value)
        {
            buffer.Add(new SignalSample(tag, T0.AddSeconds(seconds), value, SignalQuality.Good), rank);
            while (buffer.TryRelease(out SignalSample s))
            {
                released.Add(s);
            }
        }

        Add("B", 1, 3, 30);
        Add("A", 0, 3, 31);
        Add("A", 0, 1, 10);
        Add("A", 0, 1, 10);     // duplicate
        Add("A", 0, 1, 11);     // conflict: the first is kept
        Add("B", 1, 2, 20);
        Add("A", 0, 20, 200);   // releases everything before 10 s
        Add("B", 1, 5, 50);     // late: more than 10 s older than the newest row
        Add("B", 1, 12, 120);
        while (buffer.TryDrain(out SignalSample s))
        {
            released.Add(s);
        }

        Assert.Equal(["A@1=10", "B@2=20", "A@3=31", "B@3=30", "B@12=120", "A@20=200"], released.Select(s => $"{s.Tag}@{(s.Time - T0).TotalSeconds}={s.Value}").ToArray());
        Assert.Equal(1, buffer.Duplicates);
        Assert.Equal(1, buffer.Conflicts);
        Assert.Equal(1, buffer.Late);
    }

    [Fact]
    public void Replay_HistoryShuffledWithinFiveSeconds_WithRepeats_GivesTheSameRecordsAsTheSortedOne()
    {
        using var folder = new TempFolder();
        (string sorted, string labs, PlantDescription plant) = Simulate(folder, TimeSpan.FromHours(6));
        string[] lines = File.ReadAllLines(sorted);

        // Each row moves by up to 5 s; 2 % of the rows come twice, 0.5 % a third time with another value (a conflict,
        // after the first), 0.2 % once more 30 s late; plus rows of a tag the plant does not have, and bad lines.
        var random = new Random(5);
        var keyed = new List<(double Key, int Order, string Line)>();
        for (int i = 1; i < lines.Length; i++)
        {
            string line = lines[i];
            double t = (DateTimeOffset.Parse(line[..line.IndexOf(',', StringComparison.Ordinal)], CultureInfo.InvariantCulture) - T0).TotalSeconds;
            double key = t + (5 * random.NextDouble());
            keyed.Add((key, i, line));
            double u = random.NextDouble();
            if (u < 0.02)
            {
                keyed.Add((key + (3 * random.NextDouble()), i, line));
            }
            else if (u < 0.025)
            {
                keyed.Add((key + 0.001, i, line[..line.LastIndexOf(',')] + "7," + line[(line.LastIndexOf(',') + 1)..]));
            }
            else if (u < 0.027)
            {
                keyed.Add((key + 30, i, line));
            }

            if (i % 5000 == 0)
            {
                keyed.Add((key, i, $"{line[..line.IndexOf(',', StringComparison.Ordinal)]},ZZ-900,1,good"));
                keyed.Add((key, i, "this is not a record"));
            }
        }

        string shuffled = folder.PathOf("shuffled.csv");
        File.WriteAllLines(shuffled, [lines[0], .. keyed.OrderBy(k => k.Key).ThenBy(k => k.Order).Select(k => k.Line)]);
        string plantPath = PlantPath;

        CliRun a = CliRun.Of("replay", "--plant", plantPath, "--history", sorted, "--labs", labs, "--records", folder.PathOf("a.lp"), "--json");
        CliRun b = CliRun.Of("replay", "--plant", plantPath, "--history", shuffled, "--labs", labs, "--records", folder.PathOf("b.lp"), "--json");

        Assert.True(a.ExitCode == 0, a.Error);
        Assert.True(b.ExitCode == 0, b.Error);
        string[] recordsA = File.ReadAllLines(folder.PathOf("a.lp")), recordsB = File.ReadAllLines(folder.PathOf("b.lp"));
        Assert.True(recordsA.Length > 100, $"{recordsA.Length} records");
        Assert.Equal(recordsA, recordsB);
        JsonNode summaryA = JsonNode.Parse(a.Output)!, summaryB = JsonNode.Parse(b.Output)!;
        Assert.Equal(summaryA["units"]!.ToJsonString(), summaryB["units"]!.ToJsonString());

        JsonNode history = summaryB["history"]!;
        long repeats = keyed.Count - (lines.Length - 1) - (2 * ((lines.Length - 1) / 5000));
        Assert.Equal(lines.Length - 1 + repeats + ((lines.Length - 1) / 5000), history["rows"]!.GetValue<long>());
        Assert.Equal(repeats, history["duplicates"]!.GetValue<long>() + history["conflicts"]!.GetValue<long>() + history["late"]!.GetValue<long>());
        Assert.True(history["duplicates"]!.GetValue<long>() > 0 && history["conflicts"]!.GetValue<long>() > 0 && history["late"]!.GetValue<long>() > 0, history.ToJsonString());
        Assert.Equal((lines.Length - 1) / 5000, history["badLines"]!.GetValue<long>());
        Assert.Equal((lines.Length - 1) / 5000, history["unknownTags"]!["ZZ-900"]!.GetValue<long>());
        Assert.Equal(0, summaryA["history"]!["duplicates"]!.GetValue<long>());

        // Each unknown tag is named once on standard error, with its count; each listed bad line with its number.
        Assert.Single(b.Error.Split('\n'), l => l.Contains("ZZ-900", StringComparison.Ordinal));
        Assert.Contains($"warning: {shuffled}: line ", b.Error, StringComparison.Ordinal);
        Assert.Contains("expected 4 fields", b.Error, StringComparison.Ordinal);
        Assert.NotNull(plant);
    }

    [Fact]
    public void Replay_TooManyBadLines_ExitsWith2_NamingTheFileAndTheFirstLines()
    {
        using var folder = new TempFolder();
        var text = new System.Text.StringBuilder("time,tag,value,quality\n");
        for (int i = 0; i < 300; i++)
        {
            text.Append(CultureInfo.InvariantCulture, $"{T0.AddSeconds(i):yyyy-MM-dd'T'HH:mm:ss'Z'},FI-301,{1000 + (i % 7)},good\n");
            text.Append(CultureInfo.InvariantCulture, $"{T0.AddSeconds(i):yyyy-MM-dd'T'HH:mm:ss'Z'};FI-302;450;good\n");
        }

        string history = folder.Write("export.csv", text.ToString());

        CliRun byDefault = CliRun.Of("replay", "--plant", PlantPath, "--history", history);
        CliRun limited = CliRun.Of("replay", "--plant", PlantPath, "--history", history, "--max-bad-lines", "5");
        CliRun generous = CliRun.Of("replay", "--plant", PlantPath, "--history", history, "--max-bad-lines", "1000", "--json");

        Assert.Equal(2, byDefault.ExitCode);
        Assert.Contains(history, byDefault.Error, StringComparison.Ordinal);
        Assert.Contains("300 of 600 data lines are bad", byDefault.Error, StringComparison.Ordinal);
        Assert.Contains("line 3", byDefault.Error, StringComparison.Ordinal);
        Assert.Equal(2, limited.ExitCode);
        Assert.Contains("more than 5 bad lines", limited.Error, StringComparison.Ordinal);
        Assert.True(generous.ExitCode == 0, generous.Error);
        Assert.Equal(300, JsonNode.Parse(generous.Output)!["history"]!["badLines"]!.GetValue<long>());
    }

    [Fact]
    public void Replay_TextSummary_CountsWhatWasDropped()
    {
        using var folder = new TempFolder();
        string history = folder.Write("h.csv", "time,tag,value,quality\n"
            + "2026-03-02T00:00:00Z,FI-301,1000,good\n"
            + "2026-03-02T00:00:00Z,FI-301,1000,good\n"
            + "2026-03-02T00:00:01Z,QI-1,3,good\n"
            + "oops\n");

        CliRun run = CliRun.Of("replay", "--plant", PlantPath, "--history", history);

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("History: 1 bad lines skipped, 1 duplicate, 0 conflicting and 0 late rows dropped, 1 rows of 1 unknown tag(s) ignored.", run.Output, StringComparison.Ordinal);
        Assert.Contains("unknown tag QI-1: 1 rows", run.Output, StringComparison.Ordinal);
        Assert.Contains("line 5", run.Error, StringComparison.Ordinal);
    }

    private static string PlantPath => Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json");

    private static (string History, string Labs, PlantDescription Plant) Simulate(TempFolder folder, TimeSpan duration)
    {
        string plant = PlantPath.Replace("\\", "/", StringComparison.Ordinal);
        string scenarioPath = folder.Write("s.scenario.json", $$"""
            { "plant": "{{plant}}", "start": "2026-03-02T00:00:00Z", "duration": "{{duration:c}}", "step": "00:00:02", "seed": 3,
              "faults": [ { "kind": "sensor-stuck", "tag": "FI-302", "start": "03:00:00" } ],
              "lab": { "interval": "01:00:00", "delay": "00:30:00", "sigma": 0.0005 } }
            """);
        Scenario scenario = ScenarioReader.Load(scenarioPath);
        string history = folder.PathOf("history.csv"), labs = folder.PathOf("labs.csv");
        var simulation = new PlantSimulation(scenario);
        using (var sink = new FileSink(history, labs))
        {
            while (!simulation.Finished)
            {
                simulation.Step(sink);
            }
        }

        return (history, labs, scenario.Plant);
    }

    private sealed class FileSink(string history, string labs) : ISimulationSink, IDisposable
    {
        private readonly HistoryCsvWriter _history = HistoryCsvWriter.Create(history);
        private readonly LabCsvWriter _labs = LabCsvWriter.Create(labs);

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample) => _history.Write(sample);

        public void OnLabResult(LabResult result) => _labs.Write(result);

        public void OnTruth(UnitDescription unit, TruthSample sample)
        {
        }

        public void Dispose()
        {
            _history.Dispose();
            _labs.Dispose();
        }
    }
}

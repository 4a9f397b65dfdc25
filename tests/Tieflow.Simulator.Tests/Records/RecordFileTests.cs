using Tieflow.Core.Monitoring;
using Tieflow.Core.Scenarios;
using Tieflow.Files;

namespace Tieflow.Simulator.Tests.Records;

/// <summary>The history CSV, lab CSV and truth file writers and readers of Tieflow.Files: round trips and strict errors.</summary>
public sealed class RecordFileTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);

    [FsCheck.Xunit.Property(MaxTest = 200, Replay = "(5,7)")]
    public bool History_RoundTripsEveryDoubleExactly(double value, int milliseconds)
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("h.csv");
        DateTimeOffset time = T0.AddMilliseconds(Math.Abs(milliseconds % 10_000_000));
        var sample = new SignalSample("FI-301", time, double.IsFinite(value) ? value : 0, SignalQuality.Uncertain);
        using (HistoryCsvWriter w = HistoryCsvWriter.Create(path))
        {
            w.Write(sample);
        }

        return HistoryCsvReader.Read(path).Single() == sample;
    }

    [Fact]
    public void History_WritesTheContractsHeaderAndForm()
    {
        var text = new MemoryStream();
        using (var w = new HistoryCsvWriter(text))
        {
            w.Write(new SignalSample("AI-314", T0, 2.5, SignalQuality.Good));
            w.Write(new SignalSample("AI-314", T0.AddMilliseconds(250), 0.1, SignalQuality.Bad));
        }

        Assert.Equal("time,tag,value,quality\n2026-03-02T08:00:00Z,AI-314,2.5,good\n2026-03-02T08:00:00.25Z,AI-314,0.1,bad\n", System.Text.Encoding.UTF8.GetString(text.ToArray()));
    }

    [Theory]
    [InlineData("time,tag,value\n", "line 1", "header")]
    [InlineData("time,tag,value,quality\n2026-03-02 08:00:00,FI-301,1,good\n", "line 2, column 1", "ISO 8601")]
    [InlineData("time,tag,value,quality\n2026-03-02T08:00:00Z,FI-301,1;5,good\n", "line 2, column 29", "number")]
    [InlineData("time,tag,value,quality\n2026-03-02T08:00:00Z,FI-301,1,fine\n", "line 2, column 31", "good, uncertain or bad")]
    [InlineData("time,tag,value,quality\n2026-03-02T08:00:00Z,FI-301,1\n", "line 2", "4 fields")]
    [InlineData("time,tag,value,quality\n2026-03-02T08:00:00Z,FI-301,NaN,good\n", "line 2, column 29", "finite")]
    [InlineData("time,tag,value,quality\n2026-03-02T08:00:00Z,,1,good\n", "line 2, column 22", "tag")]
    public void History_BadLines_NameFileLineAndColumn(string content, string where, string expected)
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("h.csv");
        File.WriteAllText(path, content);
        InputException e = Assert.Throws<InputException>(() => HistoryCsvReader.Read(path).ToList());
        InputProblem p = Assert.Single(e.Problems);
        Assert.Equal(path, p.File);
        Assert.Equal(where, p.JsonPath);
        Assert.Contains(expected, p.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Labs_RoundTrip_AndRejectAResultReportedBeforeItsSample()
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("l.csv");
        var result = new LabResult(T0, T0.AddMinutes(90), "raffinate", "acetone", 0.07624602251906037);
        using (LabCsvWriter w = LabCsvWriter.Create(path))
        {
            w.Write(result);
        }

        Assert.StartsWith("sampled,reported,stream,component,value\n", File.ReadAllText(path), StringComparison.Ordinal);
        Assert.Equal(result, Assert.Single(LabCsvReader.Load(path)));

        File.WriteAllText(path, "sampled,reported,stream,component,value\n2026-03-02T08:00:00Z,2026-03-02T07:00:00Z,raffinate,acetone,0.07\n");
        InputException e = Assert.Throws<InputException>(() => LabCsvReader.Load(path));
        Assert.Equal("line 2, column 22", e.Problems[0].JsonPath);
        File.WriteAllText(path, "sampled,reported,stream,component,value\n2026-03-02T08:00:00Z,2026-03-02T09:00:00Z,raffinate,acetone,1.5\n");
        Assert.Contains("between 0 and 1", Assert.Throws<InputException>(() => LabCsvReader.Load(path)).Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    public void Truth_RoundTripsInBothForms(int units)
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("t.json");
        var faults = new TruthFault[] { new(FaultKind.SensorBias, null, "FI-301", T0, null), new(FaultKind.Entrainment, 2, null, T0, T0.AddHours(8)) };
        TruthSample Sample(int i) => new(T0.AddMinutes(i), [0.92, 0.9 - (i * 1e-3)], 0.07624602251906037 + i, [0, 0.02], 4.5, units == 2 ? 3.25 : null);
        string[] ids = units == 1 ? ["X300"] : ["X300", "C200"];
        using (TruthFileWriter w = TruthFileWriter.Create(path, ids.Select(id => (id, (IReadOnlyList<TruthFault>)faults)).ToArray()))
        {
            for (int i = 0; i < 3; i++)
            {
                foreach (string id in ids)
                {
                    w.Write(id, Sample(i));
                }
            }

            w.Complete();
        }

        TruthFile truth = TruthFileReader.Load(path);
        Assert.Equal(units == 1, truth.IsSingleUnitForm);
        foreach (string id in ids)
        {
            UnitTruth t = truth.ForUnit(id)!;
            Assert.Equal(faults, t.Faults);
            Assert.Equal(3, t.Samples.Count);
            TruthSample s = t.Samples[2];
            Assert.Equal(Sample(2).Time, s.Time);
            Assert.Equal(Sample(2).StageEfficiency, s.StageEfficiency);
            Assert.Equal(Sample(2).RaffinateSolute, s.RaffinateSolute);
            Assert.Equal(Sample(2).TheoreticalStages, s.TheoreticalStages);
        }

        Assert.Empty(Directory.GetFiles(folder.Path, "*.part"));
    }

    [Fact]
    public void Truth_Reader_ListsEveryProblemWithItsPath()
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("t.json");
        File.WriteAllText(path, """{ "faults": [{ "kind": "leak", "start": "2026-03-02T00:00:00Z" }], "samples": [{ "time": "yesterday", "stageEfficiency": [0.9], "raffinateSolute": 0.1, "entrainment": [0], "solventLossRate": 0, "extra": 1 }] }""");
        InputException e = Assert.Throws<InputException>(() => TruthFileReader.Load(path));
        Assert.Contains(e.Problems, p => p.JsonPath == "$.faults[0].kind");
        Assert.Contains(e.Problems, p => p.JsonPath == "$.samples[0].time");
        Assert.Contains(e.Problems, p => p.JsonPath == "$.samples[0].extra");
    }
}

using Tieflow.Core.Monitoring;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator.Cli;

namespace Tieflow.Simulator.Tests.Cli;

public sealed class SimCliTests
{
    public static TheoryData<string> Scenarios() => [.. SampleScenarios.Names];

    [Theory]
    [MemberData(nameof(Scenarios))]
    public async Task Run_EverySampleScenario_WritesHistoryLabsAndTruthThatReadBack(string name)
    {
        using var folder = new TempFolder();
        string scenarioPath = SampleScenarios.Copy(folder, name);
        (int code, string error) = await RunAsync("run", "--scenario", scenarioPath, "--history", folder.PathOf("h.csv"), "--labs", folder.PathOf("l.csv"), "--truth", folder.PathOf("t.json"));

        Assert.True(code == 0, error);
        Assert.Contains("not a safety system", error, StringComparison.Ordinal);
        Scenario scenario = ScenarioReader.Load(scenarioPath);
        long steps = (long)(scenario.Duration / scenario.Step);
        int instruments = scenario.Plant.Units.Sum(u => u.Instruments.Count);
        SignalSample[] history = HistoryCsvReader.Read(folder.PathOf("h.csv")).ToArray();
        Assert.Equal(steps * instruments, history.Length);
        Assert.Equal(scenario.Start, history[0].Time);
        IReadOnlyList<LabResult> labs = LabCsvReader.Load(folder.PathOf("l.csv"));
        Assert.NotEmpty(labs);
        Assert.All(labs, l => Assert.True(l.Reported <= scenario.End));
        TruthFile truth = TruthFileReader.Load(folder.PathOf("t.json"));
        foreach (var unit in scenario.Plant.Units)
        {
            UnitTruth t = truth.ForUnit(unit.Id)!;
            Assert.Equal(scenario.Faults.Count(f => f.Unit == unit.Id || (f.Unit is null && f.Tag is not null && unit.FindInstrument(f.Tag) is not null)), t.Faults.Count);
            Assert.Equal((int)Math.Ceiling(scenario.Duration.TotalMinutes), t.Samples.Count);
            Assert.All(t.Samples, s => Assert.Equal(unit.Stages, s.StageEfficiency.Count));
            Assert.Equal(unit.Kind == Core.Plant.UnitKind.Column, t.Samples[0].TheoreticalStages is not null);
            if (unit.Kind == Core.Plant.UnitKind.Column)
            {
                // The stage count is known whenever the column runs near its design; a design count that lands on a
                // whole number of stages within rounding once gave none for most of a steady run.
                int known = t.Samples.Count(s => s.TheoreticalStages is not null);
                Assert.True(known >= 0.95 * t.Samples.Count, $"{unit.Id}: theoretical stages known in {known} of {t.Samples.Count} truth samples");
            }
        }
    }

    [Fact]
    public async Task Run_SameScenarioAndSeed_GivesByteIdenticalFiles_AnotherSeedDoesNot()
    {
        using var folder = new TempFolder();
        string scenario = SampleScenarios.Copy(folder, "fault-entrainment.scenario.json", step: "00:00:10");
        string other = SampleScenarios.Copy(folder, "fault-entrainment.scenario.json", step: "00:00:10", seed: 8, target: "seed8.scenario.json");
        foreach ((string s, string suffix) in new[] { (scenario, "a"), (scenario, "b"), (other, "c") })
        {
            (int code, string error) = await RunAsync("run", "--scenario", s, "--history", folder.PathOf($"h{suffix}.csv"), "--labs", folder.PathOf($"l{suffix}.csv"), "--truth", folder.PathOf($"t{suffix}.json"));
            Assert.True(code == 0, error);
        }

        foreach (string kind in new[] { "h{0}.csv", "l{0}.csv", "t{0}.json" })
        {
            byte[] a = File.ReadAllBytes(folder.PathOf(string.Format(System.Globalization.CultureInfo.InvariantCulture, kind, "a")));
            byte[] b = File.ReadAllBytes(folder.PathOf(string.Format(System.Globalization.CultureInfo.InvariantCulture, kind, "b")));
            Assert.True(a.AsSpan().SequenceEqual(b), $"{kind}: two runs with the same seed differ");
        }

        Assert.False(File.ReadAllBytes(folder.PathOf("ha.csv")).AsSpan().SequenceEqual(File.ReadAllBytes(folder.PathOf("hc.csv"))), "another seed must give other noise");
    }

    [Theory]
    [InlineData("run")]
    [InlineData("run", "--scenario", "missing.scenario.json")]
    [InlineData("run", "--scenario", "x.json", "--speed", "2", "--as-fast-as-possible")]
    [InlineData("run", "--scenario", "x.json", "--speed", "0")]
    [InlineData("run", "--scenario", "x.json", "--serve", "http://127.0.0.1:4840")]
    [InlineData("run", "--scenario", "x.json", "--serve", "opc.tcp://plant.example:4840")]
    [InlineData("walk")]
    public async Task Run_BadInput_ExitsTwoWithAMessage(params string[] args)
    {
        (int code, string error) = await RunAsync(args);
        Assert.Equal(2, code);
        Assert.Contains("error", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_Cancelled_StopsCleanlyWithReadableFiles()
    {
        using var folder = new TempFolder();
        string scenario = SampleScenarios.Copy(folder, "clean.scenario.json", step: "00:00:01");
        using var cts = new CancellationTokenSource();
        var error = new StringWriter();
        var settings = new RunSettings(scenario, folder.PathOf("h.csv"), folder.PathOf("l.csv"), folder.PathOf("t.json"), null, Speed: 3600);
        Task<int> run = RunHandler.RunAsync(settings, TextWriter.Synchronized(error), TimeProvider.System, cts.Token);
        await Task.Delay(TimeSpan.FromSeconds(1));
        await cts.CancelAsync();
        Assert.Equal(0, await run.WaitAsync(TimeSpan.FromSeconds(30)));

        Assert.Contains("stopped at", error.ToString(), StringComparison.Ordinal);
        Assert.NotEmpty(HistoryCsvReader.Read(folder.PathOf("h.csv")));
        Assert.NotEmpty(TruthFileReader.Load(folder.PathOf("t.json")).ForUnit("X300")!.Samples);
    }

    internal static async Task<(int Code, string Error)> RunAsync(params string[] args)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        int code = await SimCli.RunAsync(args, output, error, TimeProvider.System);
        return (code, error.ToString());
    }
}

using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator.Cli;

namespace Tieflow.Simulator.Tests.Cli;

/// <summary>
/// <c>--anchor</c>: plant time = scenario start + speed × (now − anchor), so that a restarted simulator continues the
/// same plant at the time its clock says. The wall clock is a fake one that never moves, so every figure is exact.
/// </summary>
public sealed class AnchoredClockTests
{
    [Fact]
    public async Task Run_AnchoredTenPlantHoursAgo_ResumesAtThatTimeWithTheSamePlantAsARunFromTheStart()
    {
        using var folder = new TempFolder();
        string scenarioPath = SampleScenarios.Copy(folder, "clean.scenario.json", step: "00:00:10");
        Scenario scenario = ScenarioReader.Load(scenarioPath);
        var clock = new FakeTimeProvider(new DateTimeOffset(2026, 12, 3, 9, 0, 0, TimeSpan.Zero));

        // Ten minutes of wall clock at 60 times real time: ten hours of plant time since the scenario's start.
        var settings = new RunSettings(scenarioPath, folder.PathOf("anchored.csv"), null, null, null, Speed: 60)
        {
            Anchor = clock.GetUtcNow() - TimeSpan.FromMinutes(10),
        };
        using var cts = new CancellationTokenSource();
        var error = new StringWriter();
        Task<int> run = RunHandler.RunAsync(settings, TextWriter.Synchronized(error), clock, cts.Token);

        // The steps due are simulated at once; the next one waits for a clock that does not move. The history is
        // flushed before that wait, so its last row tells when the run has got there.
        string due = (scenario.Start + TimeSpan.FromHours(10)).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z,'", System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(await Eventually(() => ReadShared(folder.PathOf("anchored.csv")).Contains(due, StringComparison.Ordinal), TimeSpan.FromSeconds(60)), error.ToString());
        await cts.CancelAsync();
        Assert.Equal(0, await run.WaitAsync(TimeSpan.FromSeconds(60)));
        Assert.Contains($"resuming at {scenario.Start + TimeSpan.FromHours(10):u} (3600 steps simulated to get there)", error.ToString(), StringComparison.Ordinal);

        SignalSample[] anchored = HistoryCsvReader.Read(folder.PathOf("anchored.csv")).ToArray();
        Assert.Equal(scenario.Start + TimeSpan.FromHours(10), anchored[^1].Time);

        // The same plant: a run from the scenario's start without an anchor records the same readings up to then.
        var plain = new RunSettings(scenarioPath, folder.PathOf("plain.csv"), null, null, null, Speed: null);
        Assert.Equal(0, await RunHandler.RunAsync(plain, new StringWriter(), TimeProvider.System, CancellationToken.None));
        string whole = File.ReadAllText(folder.PathOf("plain.csv"));
        string resumed = File.ReadAllText(folder.PathOf("anchored.csv"));
        Assert.True(whole.Length > resumed.Length && whole.StartsWith(resumed, StringComparison.Ordinal), "the anchored run's readings differ from those of a run from the start");
    }

    [Fact]
    public async Task Run_AnchorInTheFuture_WaitsForItBeforeTheFirstStep()
    {
        using var folder = new TempFolder();
        string scenarioPath = SampleScenarios.Copy(folder, "clean.scenario.json", step: "00:00:10");
        var clock = new FakeTimeProvider(new DateTimeOffset(2026, 12, 3, 9, 0, 0, TimeSpan.Zero));
        var settings = new RunSettings(scenarioPath, folder.PathOf("h.csv"), null, null, null, Speed: 60) { Anchor = clock.GetUtcNow() + TimeSpan.FromMinutes(5) };
        using var cts = new CancellationTokenSource();
        var error = new StringWriter();
        Task<int> run = RunHandler.RunAsync(settings, TextWriter.Synchronized(error), clock, cts.Token);

        Assert.True(await Eventually(() => error.ToString().Contains("starting at", StringComparison.Ordinal), TimeSpan.FromSeconds(60)), error.ToString());
        await cts.CancelAsync();
        Assert.Equal(0, await run.WaitAsync(TimeSpan.FromSeconds(60)));
        Assert.Empty(HistoryCsvReader.Read(folder.PathOf("h.csv")));
    }

    [Theory]
    [InlineData("--anchor", "yesterday", "--speed", "2")]
    [InlineData("--anchor", "2026-03-02T00:00:00Z", "--as-fast-as-possible")]
    [InlineData("--anchor", "2026-03-02T00:00:00Z")]
    public async Task Run_BadAnchor_ExitsTwoNamingTheOption(params string[] args)
    {
        (int code, string error) = await SimCliTests.RunAsync(["run", "--scenario", "x.json", .. args]);
        Assert.Equal(2, code);
        Assert.Contains("--anchor", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_AnchorSoOldThatThePlantTimeIsPastTheEnd_ExitsTwoSayingSo()
    {
        using var folder = new TempFolder();
        string scenarioPath = SampleScenarios.Copy(folder, "clean.scenario.json", step: "00:00:10");
        (int code, string error) = await SimCliTests.RunAsync("run", "--scenario", scenarioPath, "--speed", "3600", "--anchor", "2026-03-02T00:00:00Z");
        Assert.Equal(2, code);
        Assert.Contains("past the scenario's end", error, StringComparison.Ordinal);
    }

    private static string ReadShared(string path)
    {
        if (!File.Exists(path))
        {
            return string.Empty;
        }

        using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete);
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }

    private static async Task<bool> Eventually(Func<bool> condition, TimeSpan patience)
    {
        var watch = System.Diagnostics.Stopwatch.StartNew();
        while (watch.Elapsed < patience)
        {
            if (condition())
            {
                return true;
            }

            await Task.Delay(20);
        }

        return condition();
    }
}

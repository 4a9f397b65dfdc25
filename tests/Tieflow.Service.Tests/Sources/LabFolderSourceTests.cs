using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Sources;

/// <summary>The lab drop folder on a fake clock: each look at the folder happens when the test moves the clock on.</summary>
public sealed class LabFolderSourceTests : IDisposable
{
    private const string Header = "sampled,reported,stream,component,value";
    private static readonly TimeSpan Poll = TimeSpan.FromSeconds(10);
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(30);

    private readonly TempFolder _temp = new();
    private readonly FakeTimeProvider _clock = new(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));

    public void Dispose() => _temp.Dispose();

    private string Drop => Path.Combine(_temp.Path, "labs");

    private LabFolderSource Source(TimeSpan? settle = null) =>
        new(new LabFolderOptions { Folder = Drop, PollInterval = Poll, SettleTime = settle ?? Poll }, _clock);

    private static string Good(params double[] values) =>
        Header + "\n" + string.Concat(values.Select((v, i) =>
            FormattableString.Invariant($"2026-03-02T0{i}:00:00Z,2026-03-02T0{i}:30:00Z,X300/raffinate,acetone,{v}\n")));

    /// <summary>Waits for the first look at the folder.</summary>
    private static async Task StartedAsync(LabFolderSource source, SourceEventLog log)
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (source.Polls < 1)
        {
            Assert.False(log.Run.IsFaulted, log.Run.Exception?.ToString());
            Assert.True(clock.Elapsed < Patience, "the source never looked at the folder");
            await Task.Delay(10);
        }
    }

    /// <summary>Moves the clock on by one poll interval and waits until the source has looked at the folder again.</summary>
    private async Task NextPollAsync(LabFolderSource source, SourceEventLog log)
    {
        long before = source.Polls;
        _clock.Advance(Poll);
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (source.Polls <= before)
        {
            Assert.False(log.Run.IsFaulted, log.Run.Exception?.ToString());
            Assert.True(clock.Elapsed < Patience, "the source did not look at the folder again");
            await Task.Delay(10);
        }
    }

    private static List<LabResult> Labs(SourceEventLog log) => [.. log.Snapshot().OfType<LabArrived>().Select(l => l.Lab)];

    [Fact]
    public async Task Run_CompleteFile_EmitsItsResultsInOrderAndMovesItToProcessed()
    {
        Directory.CreateDirectory(Drop);
        File.WriteAllText(Path.Combine(Drop, "shift-a.csv"), Good(0.031, 0.029));
        LabFolderSource source = Source();
        await using var log = new SourceEventLog(source);
        await StartedAsync(source, log);
        Assert.Empty(Labs(log));

        await NextPollAsync(source, log);
        await log.WaitForAsync(e => e is LabArrived, Patience, what: "the lab results");

        await log.StopAsync();
        List<LabResult> labs = Labs(log);
        Assert.Equal([0.031, 0.029], labs.Select(l => l.Value));
        Assert.Equal(new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero), labs[0].Sampled);
        Assert.Equal(new DateTimeOffset(2026, 3, 2, 0, 30, 0, TimeSpan.Zero), labs[0].Reported);
        Assert.Equal("X300/raffinate", labs[0].Stream);
        Assert.Equal("acetone", labs[0].Component);
        Assert.False(File.Exists(Path.Combine(Drop, "shift-a.csv")));
        Assert.True(File.Exists(Path.Combine(Drop, LabFolderSource.ProcessedFolder, "shift-a.csv")));
        Assert.DoesNotContain(log.Snapshot(), e => e is not LabArrived);
    }

    [Fact]
    public async Task Run_MalformedFile_IsRejectedWithTheLineAndWhatWasExpectedAndTheSourceGoesOn()
    {
        Directory.CreateDirectory(Drop);
        File.WriteAllText(Path.Combine(Drop, "bad.csv"), Header + "\n2026-03-02T00:00:00Z,2026-03-02T00:30:00Z,raffinate,acetone,0.03\n2026-03-02T01:00:00Z,2026-03-02T01:30:00Z,raffinate,acetone,1.7\n");
        File.WriteAllText(Path.Combine(Drop, "good.csv"), Good(0.04));
        LabFolderSource source = Source();
        await using var log = new SourceEventLog(source);
        await StartedAsync(source, log);
        await NextPollAsync(source, log);

        string rejected = Path.Combine(Drop, LabFolderSource.RejectedFolder);
        Assert.True(File.Exists(Path.Combine(rejected, "bad.csv")));
        string reason = File.ReadAllText(Path.Combine(rejected, "bad.csv.reason.txt"));
        Assert.Contains("bad.csv", reason, StringComparison.Ordinal);
        Assert.Contains("line 3", reason, StringComparison.Ordinal);
        Assert.Contains("expected a fraction between 0 and 1, found 1.7", reason, StringComparison.Ordinal);
        Assert.Contains("none of its results were used", reason, StringComparison.Ordinal);

        // The good file beside it was read, and a file dropped later still is.
        File.WriteAllText(Path.Combine(Drop, "later.csv"), Good(0.05));
        await NextPollAsync(source, log);
        await NextPollAsync(source, log);
        await log.StopAsync();
        Assert.Equal([0.04, 0.05], Labs(log).Select(l => l.Value));
        Assert.True(File.Exists(Path.Combine(Drop, LabFolderSource.ProcessedFolder, "later.csv")));
    }

    [Fact]
    public async Task Run_AfterRestart_AFileProcessedBeforeIsNotReadAgain()
    {
        Directory.CreateDirectory(Drop);
        File.WriteAllText(Path.Combine(Drop, "shift-a.csv"), Good(0.031));
        LabFolderSource first = Source();
        await using (var log = new SourceEventLog(first))
        {
            await StartedAsync(first, log);
            await NextPollAsync(first, log);
            await log.StopAsync();
            Assert.Single(Labs(log));
        }

        LabFolderSource second = Source();
        await using var again = new SourceEventLog(second);
        await StartedAsync(second, again);
        await NextPollAsync(second, again);
        await NextPollAsync(second, again);
        await again.StopAsync();
        Assert.Empty(Labs(again));
        Assert.Single(Directory.GetFiles(Path.Combine(Drop, LabFolderSource.ProcessedFolder)));
    }

    [Fact]
    public async Task Run_FileStillBeingWritten_IsReadOnlyOnceItStoppedChangingAndThenWhole()
    {
        Directory.CreateDirectory(Drop);
        string path = Path.Combine(Drop, "slow.csv");
        string full = Good(0.031, 0.029, 0.033);
        int cut = full.IndexOf("0.029", StringComparison.Ordinal) - 20;
        File.WriteAllText(path, full[..cut]);
        LabFolderSource source = Source(settle: 2 * Poll);
        await using var log = new SourceEventLog(source);
        await StartedAsync(source, log);

        // Each look finds it grown: never read, never rejected.
        for (int part = 1; part <= 3; part++)
        {
            File.AppendAllText(path, part < 3 ? full[(cut + (part - 1)) ..(cut + part)] : full[(cut + 2) ..]);
            await NextPollAsync(source, log);
            Assert.Empty(Labs(log));
            Assert.True(File.Exists(path));
            Assert.Empty(Directory.GetFiles(Path.Combine(Drop, LabFolderSource.RejectedFolder)));
        }

        // Unchanged for one poll interval: still less than the settle time.
        await NextPollAsync(source, log);
        Assert.Empty(Labs(log));
        await NextPollAsync(source, log);
        await log.StopAsync();
        Assert.Equal([0.031, 0.029, 0.033], Labs(log).Select(l => l.Value));
        Assert.Empty(Directory.GetFiles(Path.Combine(Drop, LabFolderSource.RejectedFolder)));
    }

    [Fact]
    public async Task Run_FileWithAnotherExtension_IsLeftAloneUntilRenamedToCsv()
    {
        Directory.CreateDirectory(Drop);
        string part = Path.Combine(Drop, "shift-b.csv.part");
        File.WriteAllText(part, Header + "\n2026-03-02T00:00");
        LabFolderSource source = Source(settle: TimeSpan.Zero);
        await using var log = new SourceEventLog(source);
        await StartedAsync(source, log);
        await NextPollAsync(source, log);
        Assert.Empty(Labs(log));
        Assert.True(File.Exists(part));

        File.WriteAllText(part, Good(0.02));
        File.Move(part, Path.Combine(Drop, "shift-b.csv"));
        await NextPollAsync(source, log);
        await log.StopAsync();
        Assert.Equal([0.02], Labs(log).Select(l => l.Value));
        Assert.Empty(Directory.GetFiles(Path.Combine(Drop, LabFolderSource.RejectedFolder)));
    }

    [Fact]
    public async Task Run_FolderMissing_IsMadeWithItsProcessedAndRejectedFolders()
    {
        LabFolderSource source = Source();
        await using var log = new SourceEventLog(source);
        await StartedAsync(source, log);
        await log.StopAsync();

        Assert.True(Directory.Exists(Path.Combine(Drop, LabFolderSource.ProcessedFolder)));
        Assert.True(Directory.Exists(Path.Combine(Drop, LabFolderSource.RejectedFolder)));
    }

    [Fact]
    public async Task Run_BadSettings_FailsWithExitTwoNamingTheKeys()
    {
        var source = new LabFolderSource(new LabFolderOptions { Folder = " ", PollInterval = TimeSpan.Zero }, _clock);
        await using var log = new SourceEventLog(source);

        var failure = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));
        Assert.Equal(2, failure.ExitCode);
        Assert.Contains("Tieflow:Labs:Folder: missing", failure.Message, StringComparison.Ordinal);
        Assert.Contains("Tieflow:Labs:PollInterval:", failure.Message, StringComparison.Ordinal);
    }
}

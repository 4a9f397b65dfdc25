using System.Text.Json;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// <c>tieflow run</c> as a user starts it: the embedded default (the demo train simulated in process) in an empty
/// working directory, stopped by <c>--max-runtime</c> or by SIGTERM, and then <c>tieflow show</c> on the store it
/// wrote. The simulated plant runs at a huge speed factor so that hours of plant time pass in seconds; assertions are
/// on events and counts with generous margins.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunEndToEndTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(180);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Run_MaxRuntime_StopsCleanlyAndTheStoreHoldsRecords()
    {
        using var run = new TieflowProcess(_folder.Path, null, "run", "--max-runtime", "8s", "--Tieflow:Source:Speed=100000", "--Tieflow:Health:Port=0");

        int exit = run.WaitForExit(Patience);

        Assert.True(exit == 0, $"exit {exit}: {run.Error}");
        Assert.StartsWith("Advisory only:", run.Output, StringComparison.Ordinal);
        Assert.Contains("not a safety system", run.Output, StringComparison.Ordinal);
        Assert.Contains("Tieflow.Run[1014] Maximum run time 00:00:08 reached", run.Error, StringComparison.Ordinal);
        Assert.Contains("Tieflow.Monitor[1011] Monitor stopped:", run.Error, StringComparison.Ordinal);
        Assert.Matches(@"X300: \d+ windows; E1 ", run.Output);
        Assert.Contains("; stopped", run.Output, StringComparison.Ordinal);

        string store = Path.Combine(_folder.Path, "tieflow-data", "tieflow.db");
        Assert.True(File.Exists(store), "the default store is tieflow-data/tieflow.db under the working directory");
        CliRun show = CliRun.Of("show", "--store", store, "--json");
        Assert.True(show.ExitCode == 0, show.Error);
        using JsonDocument doc = JsonDocument.Parse(show.Output);
        JsonElement counts = doc.RootElement.GetProperty("counts");
        foreach (string measurement in new[] { "tieflow_stage", "tieflow_unit", "tieflow_stream", "tieflow_soft_sensor" })
        {
            Assert.True(counts.TryGetProperty(measurement, out JsonElement n) && n.GetInt64() > 0, $"no {measurement} records: {counts}");
        }

        // At least one window with a record for each of the four stages of X300.
        Assert.True(counts.GetProperty("tieflow_stage").GetInt64() >= 4, counts.ToString());
    }

    [Fact]
    public void Run_Sigterm_AfterTheFaultIsDetected_StopsCleanlyWithTheAlertStored()
    {
        using var run = new TieflowProcess(_folder.Path, null, "run", "--Tieflow:Source:Speed=100000", "--Tieflow:Health:Port=0");

        bool detected = run.WaitForError("Alert raised on X300: efficiency-drift (medium)", Patience);
        Assert.True(detected, $"the scripted efficiency fault was not detected: {run.Error}");
        run.Terminate();
        int exit = run.WaitForExit(Patience);

        Assert.True(exit == 0, $"exit {exit}: {run.Error}");
        Assert.Contains("Tieflow.Monitor[1010] Monitor stopping", run.Error, StringComparison.Ordinal);
        Assert.Contains("Tieflow.Monitor[1011] Monitor stopped:", run.Error, StringComparison.Ordinal);
        CliRun show = CliRun.Of("show", "--store", Path.Combine(_folder.Path, "tieflow-data", "tieflow.db"), "--json");
        Assert.True(show.ExitCode == 0, show.Error);
        using JsonDocument doc = JsonDocument.Parse(show.Output);
        Assert.Contains(doc.RootElement.GetProperty("alerts").EnumerateArray(), a => a.GetProperty("kind").GetString() == "efficiency-drift");
    }
}

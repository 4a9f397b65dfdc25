using System.Text.Json;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Service.Output;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Tests.Cli;

public sealed class ShowCommandTests : IDisposable
{
    // Records of the demo train X300 at the Brackenmoor site (invented data for the demo scenario).
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private async Task<string> StoreWithRecords()
    {
        string path = System.IO.Path.Combine(_folder.Path, "tieflow.db");
        await using var store = new SqliteStore(new SqliteStoreOptions { Path = path, Site = "Brackenmoor" }, TimeProvider.System);
        var records = new List<MonitorRecord>();
        for (int minute = 0; minute < 3; minute++)
        {
            DateTimeOffset t = T0.AddMinutes(minute);
            records.Add(new StageRecord("X300", t, 3, new EstimatedValue(0.9 - (0.1 * minute), 0.03), 0.002, 298.2));
            records.Add(new SoftSensorRecord("X300", t, "raffinate-acetone", 0.019 + (0.001 * minute), 0.0005, 0.0001));
            records.Add(new SignalRecord("X300", t, "FI-301", 1500 + minute, SignalQuality.Good));
        }

        records.Add(new AlertRecord("X300", T0.AddMinutes(2), "efficiency-drift", AlertSeverity.High, 3, null, true,
            "Stage 3 efficiency 0.70 is below 0.75", new Dictionary<string, double> { ["threshold"] = 0.75 }));
        await store.WriteAsync(records, CancellationToken.None);
        return path;
    }

    [Fact]
    public async Task Json_has_the_span_counts_latest_values_alerts_and_the_notice()
    {
        string path = await StoreWithRecords();
        CliRun run = CliRun.Of("show", "--store", path, "--json");
        Assert.Equal(0, run.ExitCode);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        JsonElement root = doc.RootElement;
        Assert.Equal("2026-03-02T08:00:00Z", root.GetProperty("from").GetString());
        Assert.Equal("2026-03-02T08:02:00Z", root.GetProperty("to").GetString());
        JsonElement counts = root.GetProperty("counts");
        Assert.Equal(3, counts.GetProperty("tieflow_stage").GetInt64());
        Assert.Equal(3, counts.GetProperty("tieflow_signal").GetInt64());
        Assert.Equal(1, counts.GetProperty("tieflow_alert").GetInt64());
        JsonElement stage = Assert.Single(root.GetProperty("latest").GetProperty("tieflow_stage").EnumerateArray());
        Assert.Equal("2026-03-02T08:02:00Z", stage.GetProperty("time").GetString());
        Assert.Equal("3", stage.GetProperty("tags").GetProperty("stage").GetString());
        Assert.Equal(0.7, stage.GetProperty("fields").GetProperty("efficiency").GetDouble(), 12);
        JsonElement alert = Assert.Single(root.GetProperty("alerts").EnumerateArray());
        Assert.Equal("efficiency-drift", alert.GetProperty("kind").GetString());
        Assert.Equal("high", alert.GetProperty("severity").GetString());
        Assert.Equal(3, alert.GetProperty("stage").GetInt32());
        Assert.True(alert.GetProperty("active").GetBoolean());
        Assert.Equal("Stage 3 efficiency 0.70 is below 0.75", alert.GetProperty("message").GetString());
        Assert.Equal(Notices.Advisory, root.GetProperty("notice").GetString());
    }

    [Fact]
    public async Task Text_lists_counts_latest_values_and_alerts()
    {
        string path = await StoreWithRecords();
        CliRun run = CliRun.Of("show", "--store", path);
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("10 records from 2026-03-02T08:00:00Z to 2026-03-02T08:02:00Z", run.Output, StringComparison.Ordinal);
        Assert.Contains("tieflow_soft_sensor", run.Output, StringComparison.Ordinal);
        Assert.Contains("efficiency-drift", run.Output, StringComparison.Ordinal);
        Assert.Contains("raised", run.Output, StringComparison.Ordinal);
        Assert.Contains("Advisory only", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void A_missing_store_is_bad_input_naming_the_file()
    {
        string path = System.IO.Path.Combine(_folder.Path, "nowhere.db");
        CliRun run = CliRun.Of("show", "--store", path, "--json");
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("nowhere.db", run.Error, StringComparison.Ordinal);
        Assert.Equal(string.Empty, run.Output);
    }

    [Fact]
    public void A_file_that_is_not_a_store_is_bad_input_naming_the_file()
    {
        string path = _folder.Write("notes.db", "these are notes, not a database; long enough to fill a SQLite header of one hundred bytes at least, yes");
        CliRun run = CliRun.Of("show", "--store", path);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("notes.db", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task An_empty_store_has_null_times_and_no_counts()
    {
        string path = System.IO.Path.Combine(_folder.Path, "empty.db");
        await new SqliteStore(new SqliteStoreOptions { Path = path, Site = "Brackenmoor" }, TimeProvider.System).DisposeAsync();
        CliRun run = CliRun.Of("show", "--store", path, "--json");
        Assert.Equal(0, run.ExitCode);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        Assert.Equal(JsonValueKind.Null, doc.RootElement.GetProperty("from").ValueKind);
        Assert.Empty(doc.RootElement.GetProperty("counts").EnumerateObject());
        Assert.Empty(doc.RootElement.GetProperty("alerts").EnumerateArray());
    }
}

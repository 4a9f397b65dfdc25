using System.Globalization;
using System.Text.RegularExpressions;
using Microsoft.Data.Sqlite;
using Tieflow.Storage.Points;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// What the process tests of the InfluxDB kind of store share (<see cref="InfluxRunCrashTests"/>,
/// <see cref="InfluxRunOutageTests"/>): <c>tieflow run</c> with the store and its outbox pointed at a server, the points
/// the outbox holds keyed as victoria-metrics exports them, and the comparison of values.
/// </summary>
internal static partial class InfluxRun
{
    /// <summary>The outbox, relative to the run's working directory.</summary>
    public const string OutboxPath = "outbox/outbox.db";

    /// <summary>Starts <c>tieflow run</c> in <paramref name="folder"/> with the InfluxDB kind of store at <paramref name="serverUrl"/>, the outbox at <see cref="OutboxPath"/> and <paramref name="settings"/> besides.</summary>
    public static TieflowProcess Start(string folder, string serverUrl, params string[] settings) => new(
        folder,
        new Dictionary<string, string> { ["TIEFLOW_INFLUX_TOKEN"] = "test-token" },
        [
            "run", .. settings, "--Tieflow:Store:Kind=influxdb", $"--Tieflow:Store:Url={serverUrl}",
            "--Tieflow:Store:Org=brackenmoor", "--Tieflow:Store:Bucket=tieflow", $"--Tieflow:Store:OutboxPath={OutboxPath}",
        ]);

    /// <summary>The latest time of the points keyed "...@ms".</summary>
    public static DateTimeOffset Latest(IEnumerable<string> keys) =>
        DateTimeOffset.FromUnixTimeMilliseconds(keys.Select(k => long.Parse(k[(k.LastIndexOf('@') + 1)..], CultureInfo.InvariantCulture)).DefaultIfEmpty(0).Max());

    /// <summary>victoria-metrics keeps about 12 significant digits (tests/Tieflow.Storage.Tests/Influx/ExpectedSamples.cs).</summary>
    public static bool Same(double a, double b) => Math.Abs(a - b) <= 1e-11 * Math.Max(1.0, Math.Abs(a));

    /// <summary>The points the outbox holds, as the keys victoria-metrics gives them: "measurement_field{sorted tags}@ms" to the value (strings as 0).</summary>
    /// <remarks>Read-only; safe while a run writes the outbox (SQLite's write-ahead log lets a reader see the last commit).</remarks>
    public static Dictionary<string, double> Pending(string path)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        if (!File.Exists(path))
        {
            return result;
        }

        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        connection.Open();
        using SqliteCommand command = connection.CreateCommand();
        command.CommandText = "SELECT line FROM outbox ORDER BY id;";
        using SqliteDataReader reader = command.ExecuteReader();
        while (reader.Read())
        {
            (string measurement, string tags, string fields, string time) = Split(reader.GetString(0));
            string labels = string.Join(',', LineProtocol.ParseTags(tags).Select(t => $"{t.Key}={t.Value}").Order(StringComparer.Ordinal));
            foreach (var (field, value) in LineProtocol.ParseFields(fields))
            {
                result[$"{measurement}_{field}{{{labels}}}@{time}"] = value is double d ? d : 0.0;
            }
        }

        return result;
    }

    /// <summary>Waits until the run's console summary reports at least <paramref name="windows"/> windows of X300.</summary>
    public static bool WaitForWindows(TieflowProcess run, int windows, TimeSpan patience) => run.WaitUntil(
        () => WindowCount().Matches(run.Output) is { Count: > 0 } seen && int.Parse(seen[^1].Groups[1].Value, CultureInfo.InvariantCulture) >= windows,
        patience);

    /// <summary>A line of line protocol in its parts: the measurement, the tags, the fields and the timestamp (ms).</summary>
    private static (string Measurement, string Tags, string Fields, string Time) Split(string line)
    {
        int headEnd = Unescaped(line, ' ', 0, quotes: false);
        int timeStart = line.LastIndexOf(' ') + 1;
        string head = line[..headEnd];
        int comma = Unescaped(head, ',', 0, quotes: false);
        string measurement = comma < 0 ? head : head[..comma];
        string tags = comma < 0 ? string.Empty : head[(comma + 1)..];
        string time = line[timeStart..];
        Assert.True(long.TryParse(time, NumberStyles.Integer, CultureInfo.InvariantCulture, out _), $"outbox line without a timestamp: {line}");
        return (measurement, tags, line[(headEnd + 1)..(timeStart - 1)], time);
    }

    private static int Unescaped(string text, char what, int from, bool quotes)
    {
        for (int i = from; i < text.Length; i++)
        {
            if (text[i] == '\\')
            {
                i++;
            }
            else if (text[i] == what && !quotes)
            {
                return i;
            }
        }

        return -1;
    }

    [GeneratedRegex(@"X300: (\d+) windows")]
    private static partial Regex WindowCount();
}

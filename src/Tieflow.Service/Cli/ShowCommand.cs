using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Spectre.Console;
using Tieflow.Service.Output;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow show --store FILE [--json]</c>: what an embedded store holds (counts by kind, time span, latest values, alerts).</summary>
internal static class ShowCommand
{
    /// <summary>Signal series listed in the readable table before the rest is summed up (all are in the JSON).</summary>
    private const int SignalRowsShown = 20;

    public static Command Create(CliContext context)
    {
        var store = new Option<string>("--store") { Description = "The embedded store (SQLite file written by 'tieflow run' or 'tieflow replay')", Required = true, HelpName = "FILE" };
        Option<bool> json = CommonOptions.Json();
        var command = new Command("show", "What an embedded store holds: record counts by kind, time span, latest values, alerts.") { store, json };
        command.SetAction(parsed => CommandRunner.Run(context, () => Run(context, parsed.GetValue(store)!, parsed.GetValue(json))));
        return command;
    }

    public static int Run(CliContext context, string path, bool json)
    {
        StoreSummary summary;
        try
        {
            using SqliteStoreReader reader = SqliteStoreReader.Open(path);
            summary = reader.Summarize();
        }
        catch (StoreFormatException e)
        {
            context.Error.WriteLine($"error: {e.Message}");
            return ExitCodes.BadInput;
        }

        if (json)
        {
            JsonOutput.Print(context.Output, w => WriteJson(w, path, summary));
        }
        else
        {
            WriteText(context, path, summary);
        }

        return ExitCodes.Success;
    }

    private static string Time(DateTimeOffset t) => t.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.FFF'Z'", CultureInfo.InvariantCulture);

    private static void WriteJson(Utf8JsonWriter w, string path, StoreSummary s)
    {
        w.WriteStartObject();
        w.WriteString("store", path);
        WriteTime(w, "from", s.From);
        WriteTime(w, "to", s.To);
        w.WriteStartObject("counts");
        foreach (var (measurement, n) in s.Counts)
        {
            w.WriteNumber(measurement, n);
        }

        w.WriteEndObject();
        w.WriteStartObject("latest");
        foreach (IGrouping<string, StoredPoint> group in s.Latest.GroupBy(p => p.Measurement))
        {
            w.WriteStartArray(group.Key);
            foreach (StoredPoint p in group)
            {
                w.WriteStartObject();
                w.WriteString("time", Time(p.Time));
                w.WriteStartObject("tags");
                foreach (var (key, value) in p.Tags)
                {
                    w.WriteString(key, value);
                }

                w.WriteEndObject();
                w.WriteStartObject("fields");
                foreach (var (key, value) in p.Fields)
                {
                    if (value is double d)
                    {
                        w.WriteNumber(key, JsonOutput.Round(d));
                    }
                    else
                    {
                        w.WriteString(key, Convert.ToString(value, CultureInfo.InvariantCulture));
                    }
                }

                w.WriteEndObject();
                w.WriteEndObject();
            }

            w.WriteEndArray();
        }

        w.WriteEndObject();
        w.WriteStartArray("alerts");
        foreach (StoredPoint a in s.Alerts)
        {
            w.WriteStartObject();
            w.WriteString("time", Time(a.Time));
            w.WriteString("unit", a.Tag("unit"));
            w.WriteString("kind", a.Tag("kind"));
            w.WriteString("severity", a.Tag("severity"));
            if (a.Tag("stage") is { } stage && int.TryParse(stage, NumberStyles.Integer, CultureInfo.InvariantCulture, out int n))
            {
                w.WriteNumber("stage", n);
            }
            else
            {
                w.WriteNull("stage");
            }

            w.WriteString("tag", a.Tag("tag"));
            w.WriteBoolean("active", a.Field("active") is double active && active != 0);
            w.WriteString("message", a.Field("message") as string ?? string.Empty);
            w.WriteStartObject("evidence");
            foreach (var (key, value) in a.Fields)
            {
                if (key.StartsWith("evidence_", StringComparison.Ordinal) && value is double d)
                {
                    w.WriteNumber(key["evidence_".Length..], JsonOutput.Round(d));
                }
            }

            w.WriteEndObject();
            w.WriteEndObject();
        }

        w.WriteEndArray();
        JsonOutput.WriteNotice(w);
        w.WriteEndObject();
    }

    private static void WriteTime(Utf8JsonWriter w, string name, DateTimeOffset? time)
    {
        if (time is { } t)
        {
            w.WriteString(name, Time(t));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static void WriteText(CliContext context, string path, StoreSummary s)
    {
        IAnsiConsole console = context.Console;
        long total = s.Counts.Values.Sum();
        console.WriteLine(total == 0
            ? $"Store {path}: empty"
            : $"Store {path}: {total.ToString("N0", CultureInfo.InvariantCulture)} records from {Time(s.From!.Value)} to {Time(s.To!.Value)}");
        if (total == 0)
        {
            console.WriteLine(Notices.Advisory);
            return;
        }

        var counts = new Table().AddColumn("record kind").AddColumn(new TableColumn("records").RightAligned());
        foreach (var (measurement, n) in s.Counts)
        {
            counts.AddRow(Markup.Escape(measurement), n.ToString("N0", CultureInfo.InvariantCulture));
        }

        console.Write(counts);

        console.WriteLine("Latest values");
        var latest = new Table().AddColumn("record kind").AddColumn("series").AddColumn("time").AddColumn("values");
        int signals = 0;
        foreach (StoredPoint p in s.Latest)
        {
            if (p.Measurement == "tieflow_signal" && ++signals > SignalRowsShown)
            {
                continue;
            }

            string series = string.Join(" ", p.Tags.Where(t => t.Key != "site").Select(t => $"{t.Key}={t.Value}"));
            string values = string.Join("  ", p.Fields.Select(f => $"{f.Key}={FormatValue(f.Value)}"));
            latest.AddRow(Markup.Escape(p.Measurement), Markup.Escape(series), Time(p.Time), Markup.Escape(values));
        }

        console.Write(latest);
        if (signals > SignalRowsShown)
        {
            console.WriteLine($"... and {signals - SignalRowsShown} more signal series (all of them with --json)");
        }

        if (s.Alerts.Count == 0)
        {
            console.WriteLine("No alerts.");
        }
        else
        {
            console.WriteLine($"Alerts ({s.Alerts.Count})");
            var alerts = new Table().AddColumn("time").AddColumn("unit").AddColumn("kind").AddColumn("severity").AddColumn("where").AddColumn("state").AddColumn("message");
            foreach (StoredPoint a in s.Alerts)
            {
                string where = a.Tag("stage") is { } stage ? $"stage {stage}" : a.Tag("tag") ?? string.Empty;
                string state = a.Field("active") is double active && active != 0 ? "raised" : "cleared";
                alerts.AddRow(Time(a.Time), Markup.Escape(a.Tag("unit") ?? string.Empty), Markup.Escape(a.Tag("kind") ?? string.Empty),
                    Markup.Escape(a.Tag("severity") ?? string.Empty), Markup.Escape(where), state, Markup.Escape(a.Field("message") as string ?? string.Empty));
            }

            console.Write(alerts);
        }

        console.WriteLine(Notices.Advisory);
    }

    private static string FormatValue(object value) => value is double d ? d.ToString("G6", CultureInfo.InvariantCulture) : $"\"{value}\"";
}

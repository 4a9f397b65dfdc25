using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.Service.Output;
using Tieflow.Service.Replay;
using Tieflow.Service.Report;
using Tieflow.Storage.Points;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow replay</c>: recorded history through the same analysis as live operation, as fast as possible.</summary>
internal static class ReplayCommand
{
    public static Command Create(CliContext context)
    {
        var plant = new Option<string>("--plant") { Description = "The plant file", Required = true };
        var history = new Option<string>("--history") { Description = "History CSV (time,tag,value,quality)", Required = true };
        var labs = new Option<string?>("--labs") { Description = "Lab CSV (sampled,reported,stream,component,value)" };
        var truth = new Option<string?>("--truth") { Description = "Ground truth of a simulated run: adds the evaluation" };
        var store = new Option<string?>("--store") { Description = "Write the records to this embedded SQLite store (created when missing; read it with 'tieflow show')" };
        var records = new Option<string?>("--records") { Description = "Write every record as one line of InfluxDB line protocol to this file" };
        var report = new Option<string?>("--report") { Description = "Write a report a person reads into this folder: index.html with its plots (efficiencies, soft sensor against analyzer and lab, solvent losses, alerts, reconciliation, ternary diagram)" };
        var json = new Option<bool>("--json") { Description = "Print the replay summary as JSON on standard output" };
        var maxBad = new Option<long?>("--max-bad-lines")
        {
            Description = "Stop with exit code 2 after more than N history lines that are not records (default: fail at the end when more than 100 and more than 1 % of the lines are bad)",
            HelpName = "N",
        };
        var reorder = CommonOptions.Duration("--reorder-window", "Source time within which history rows out of time order are put back in order (later rows are dropped as late)", ReplayRunner.DefaultReorderWindow);
        var command = new Command("replay", "Runs recorded history through the same analysis as live operation, as fast as possible.")
        {
            plant, history, labs, truth, store, records, report, json, maxBad, reorder,
        };
        command.SetAction(p => CommandRunner.Run(context, () => Run(context, p.GetValue(plant)!, p.GetValue(history)!, p.GetValue(labs), p.GetValue(truth), p.GetValue(store), p.GetValue(records), p.GetValue(json),
            new HistoryOptions(p.GetValue(maxBad), p.GetValue(reorder)), p.GetValue(report))));
        return command;
    }

    /// <summary>How the history is read: the limit on bad lines (null: the default rule) and the reorder window.</summary>
    internal sealed record HistoryOptions(long? MaxBadLines, TimeSpan ReorderWindow);

    public static int Run(CliContext context, string plantPath, string historyPath, string? labsPath, string? truthPath, string? storePath, string? recordsPath, bool json, HistoryOptions? historyOptions = null, string? reportPath = null)
    {
        historyOptions ??= new HistoryOptions(null, ReplayRunner.DefaultReorderWindow);
        if (historyOptions.MaxBadLines is < 0)
        {
            throw new CliUsageException($"--max-bad-lines must be 0 or more, found {historyOptions.MaxBadLines}");
        }

        if (historyOptions.ReorderWindow < TimeSpan.Zero)
        {
            throw new CliUsageException($"--reorder-window must be zero or more, found {historyOptions.ReorderWindow}");
        }

        PlantDescription plant = PlantReader.Load(plantPath);
        if (!File.Exists(historyPath))
        {
            throw new InputException(historyPath, "$", "the history file does not exist");
        }

        if (reportPath is not null && File.Exists(reportPath))
        {
            throw new CliUsageException($"--report {reportPath}: expected a folder for the report, but this is a file");
        }

        IReadOnlyList<LabResult> labs = labsPath is null ? [] : LabCsvReader.Load(labsPath);
        TruthFile? truth = truthPath is null ? null : TruthFileReader.Load(truthPath);
        using StreamWriter? recordFile = recordsPath is null ? null : new StreamWriter(recordsPath, append: false, new System.Text.UTF8Encoding(false), 1 << 16);
        string? storeFolder = storePath is null ? null : Path.GetDirectoryName(Path.GetFullPath(storePath));
        if (storeFolder is not null)
        {
            Directory.CreateDirectory(storeFolder);
        }

        SqliteStore? sqlite = storePath is null ? null : new SqliteStore(new SqliteStoreOptions { Path = storePath, Site = plant.Site }, TimeProvider.System);
        ReportCollector? collector = reportPath is null ? null : new ReportCollector(plant);
        void Sink(IReadOnlyList<MonitorRecord> batch)
        {
            collector?.Add(batch);
            // The store's own mapping is the one home of measurement, tag and field names: the line file and the
            // embedded store get the same points.
            sqlite?.WriteAsync(batch, CancellationToken.None).GetAwaiter().GetResult();
            if (recordFile is null)
            {
                return;
            }

            foreach (MonitorRecord r in batch)
            {
                if (RecordPoints.ToPoint(r, plant.Site) is { } point)
                {
                    recordFile.WriteLine(point.ToLine());
                }
            }
        }

        try
        {
            ReportRequest? request = collector is null ? null : new ReportRequest(reportPath!, collector, [.. new[] { plantPath, historyPath, labsPath, truthPath }.OfType<string>().Select(Path.GetFileName).OfType<string>()]);
            return Replay(context, plant, historyPath, historyOptions, labs, truth, Sink, json, request);
        }
        finally
        {
            sqlite?.DisposeAsync().AsTask().GetAwaiter().GetResult();
        }
    }

    private static int Replay(CliContext context, PlantDescription plant, string historyPath, HistoryOptions options, IReadOnlyList<LabResult> labs, TruthFile? truth, Action<IReadOnlyList<MonitorRecord>> sink, bool json, ReportRequest? report)
    {
        var runner = new ReplayRunner(plant, options.ReorderWindow);
        HistoryCsvSource source = HistoryCsvReader.Open(historyPath, new HistoryReadOptions { MaxBadLines = options.MaxBadLines });
        context.Error.WriteLine(Notices.Advisory);
        ReplayResult result = runner.Run(report is null ? source : report.Collector.Tap(source), labs, sink, rows => context.Error.WriteLine($"replay: {rows:N0} rows"));
        result = result with { BadLines = source.BadLines, FirstBadLines = source.FirstBadLines };
        if (truth is not null)
        {
            result = ReplayRunner.Evaluate(result, truth);
        }

        if (report is not null)
        {
            report.Collector.Complete(result);
            string page = ReportWriter.Write(report.Folder, new ReportHeader(plant.Site, report.Sources, result.Rows, result.Records), report.Collector.Units);
            context.Error.WriteLine($"report: {page}");
        }

        foreach ((string tag, long n) in result.UnknownTags)
        {
            context.Error.WriteLine($"warning: {historyPath}: tag {tag} is not in the plant file ({n:N0} rows ignored)");
        }

        foreach (HistoryBadLine bad in result.FirstBadLines)
        {
            context.Error.WriteLine($"warning: {historyPath}: {bad.Location}: {bad.Reason} (line skipped)");
        }

        if (result.BadLines > result.FirstBadLines.Count)
        {
            context.Error.WriteLine($"warning: {historyPath}: {result.BadLines - result.FirstBadLines.Count:N0} more bad lines skipped");
        }

        if (result.Duplicates + result.Conflicts + result.Late > 0)
        {
            context.Error.WriteLine($"warning: {historyPath}: {result.Duplicates:N0} duplicate rows, {result.Conflicts:N0} conflicting rows (same tag and time, another value: the first kept) and {result.Late:N0} late rows (beyond the reorder window) dropped");
        }

        if (json)
        {
            JsonOutput.Print(context.Output, w => WriteSummary(w, result, truth is not null));
        }
        else
        {
            WriteText(context, result);
        }

        return ExitCodes.Success;
    }

    private static void WriteSummary(Utf8JsonWriter w, ReplayResult result, bool evaluate)
    {
        w.WriteStartObject();
        WriteHistoryCounts(w, result);
        w.WriteStartArray("units");
        foreach ((UnitDescription unit, UnitSummary s, _) in result.Units)
        {
            w.WriteStartObject();
            w.WriteString("id", unit.Id);
            Time(w, "from", s.From);
            Time(w, "to", s.To);
            w.WriteNumber("samples", s.Samples);
            w.WriteNumber("windows", s.Windows);
            w.WriteNumber("reconciled", s.Reconciled);
            w.WriteNumber("steady", s.Steady);
            w.WriteStartArray("stages");
            foreach ((int stage, double mean, double last) in s.Stages)
            {
                w.WriteStartObject();
                w.WriteNumber("stage", stage);
                Number(w, "efficiencyMean", mean);
                Number(w, "efficiencyLast", last);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteStartObject("overall");
            (double e, double sigma, double theoretical, double? hets) = s.Overall;
            if (!double.IsFinite(e) && s.Stages.Count > 0)
            {
                // A train with every stage observed: the overall efficiency is the mean of the last stage efficiencies.
                double[] lasts = [.. s.Stages.Select(x => x.Last).Where(double.IsFinite)];
                e = lasts.Length == s.Stages.Count ? lasts.Average() : double.NaN;
            }

            Number(w, "efficiency", e);
            Number(w, "sigma", sigma);
            Number(w, "theoreticalStages", theoretical);
            Number(w, "hets", unit.Kind == UnitKind.Column ? hets : null);
            w.WriteEndObject();
            w.WriteStartArray("alerts");
            foreach (AlertEpisode a in s.Alerts)
            {
                w.WriteStartObject();
                w.WriteString("kind", a.Key.Kind);
                if (a.Key.Stage is int st)
                {
                    w.WriteNumber("stage", st);
                }
                else
                {
                    w.WriteNull("stage");
                }

                if (a.Key.Tag is not null)
                {
                    w.WriteString("tag", a.Key.Tag);
                }

                w.WriteString("severity", a.Severity.ToString().ToLowerInvariant());
                Time(w, "raised", a.Raised);
                Time(w, "cleared", a.Cleared);
                w.WriteString("message", a.Message);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteStartArray("softSensors");
            w.WriteStartObject();
            w.WriteString("name", s.SoftSensor.Name);
            Number(w, "last", s.SoftSensor.Last);
            w.WriteNumber("labComparisons", s.LabComparisons.Count);
            Number(w, "rmseVsLab", s.LabComparisons.Count == 0 ? double.NaN : Math.Sqrt(s.LabComparisons.Average(l => (l.Lab - l.Predicted) * (l.Lab - l.Predicted))));
            w.WriteEndObject();
            w.WriteEndArray();
            w.WriteEndObject();
        }

        w.WriteEndArray();
        if (evaluate)
        {
            w.WriteStartObject("evaluation");
            w.WriteStartArray("faults");
            int falseAlerts = 0;
            var rmse = new List<double>();
            foreach ((UnitDescription unit, _, EvaluationResult? e) in result.Units)
            {
                if (e is null)
                {
                    continue;
                }

                falseAlerts += e.FalseAlerts.Count;
                if (double.IsFinite(e.SoftSensorRmseVsTruth))
                {
                    rmse.Add(e.SoftSensorRmseVsTruth);
                }

                foreach (FaultDetection f in e.Faults)
                {
                    w.WriteStartObject();
                    w.WriteString("unit", unit.Id);
                    w.WriteString("kind", Core.Scenarios.Fault.KindName(f.Fault.Kind));
                    if (f.Fault.Stage is int st)
                    {
                        w.WriteNumber("stage", st);
                    }
                    else
                    {
                        w.WriteNull("stage");
                    }

                    if (f.Fault.Tag is not null)
                    {
                        w.WriteString("tag", f.Fault.Tag);
                    }

                    Time(w, "start", f.Fault.Start);
                    Time(w, "detected", f.Detected);
                    if (f.Delay is { } d)
                    {
                        w.WriteString("delay", d.ToString("c", CultureInfo.InvariantCulture));
                    }
                    else
                    {
                        w.WriteNull("delay");
                    }

                    if (f.AlertKind is null)
                    {
                        w.WriteNull("alertKind");
                    }
                    else
                    {
                        w.WriteString("alertKind", f.AlertKind);
                    }

                    w.WriteEndObject();
                }
            }

            w.WriteEndArray();
            w.WriteNumber("falseAlerts", falseAlerts);
            Number(w, "softSensorRmseVsTruth", rmse.Count == 0 ? double.NaN : rmse.Max());
            w.WriteStartObject("softSensorRmseVsTruthByUnit");
            foreach ((UnitDescription unit, _, EvaluationResult? e) in result.Units)
            {
                if (e is not null)
                {
                    Number(w, unit.Id, e.SoftSensorRmseVsTruth);
                }
            }

            w.WriteEndObject();
            WriteErrors(w, "efficiencyVsTruthByUnit", result, e => e.Efficiency);
            WriteErrors(w, "theoreticalStagesVsTruthByUnit", result, e => e.TheoreticalStages);
            w.WriteEndObject();
        }

        JsonOutput.WriteNotice(w);
        w.WriteEndObject();
    }

    private static void WriteHistoryCounts(Utf8JsonWriter w, ReplayResult result)
    {
        w.WriteStartObject("history");
        w.WriteNumber("rows", result.Rows);
        w.WriteNumber("badLines", result.BadLines);
        w.WriteStartArray("firstBadLines");
        foreach (HistoryBadLine bad in result.FirstBadLines)
        {
            w.WriteStartObject();
            w.WriteNumber("line", bad.Line);
            w.WriteString("location", bad.Location);
            w.WriteString("reason", bad.Reason);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteNumber("duplicates", result.Duplicates);
        w.WriteNumber("conflicts", result.Conflicts);
        w.WriteNumber("late", result.Late);
        w.WriteStartObject("unknownTags");
        foreach ((string tag, long n) in result.UnknownTags.OrderBy(t => t.Key, StringComparer.Ordinal))
        {
            w.WriteNumber(tag, n);
        }

        w.WriteEndObject();
        w.WriteNumber("records", result.Records);
        w.WriteEndObject();
    }

    private static void WriteErrors(Utf8JsonWriter w, string name, ReplayResult result, Func<EvaluationResult, EstimateError> select)
    {
        w.WriteStartObject(name);
        foreach ((UnitDescription unit, _, EvaluationResult? e) in result.Units)
        {
            if (e is not null && select(e) is { Count: > 0 } error)
            {
                w.WriteStartObject(unit.Id);
                w.WriteNumber("estimates", error.Count);
                Number(w, "maxAbsError", error.MaxAbs);
                Number(w, "rmse", error.Rmse);
                w.WriteEndObject();
            }
        }

        w.WriteEndObject();
    }

    private static void WriteText(CliContext context, ReplayResult result)
    {
        TextWriter o = context.Output;
        o.WriteLine($"Replayed {result.Rows:N0} history rows into {result.Records:N0} records.");
        long unknownRows = result.UnknownTags.Values.Sum();
        o.WriteLine($"History: {result.BadLines:N0} bad lines skipped, {result.Duplicates:N0} duplicate, {result.Conflicts:N0} conflicting and {result.Late:N0} late rows dropped, {unknownRows:N0} rows of {result.UnknownTags.Count} unknown tag(s) ignored.");
        foreach ((string tag, long n) in result.UnknownTags.OrderBy(t => t.Key, StringComparer.Ordinal))
        {
            o.WriteLine($"  unknown tag {tag}: {n:N0} rows");
        }
        foreach ((UnitDescription unit, UnitSummary s, EvaluationResult? e) in result.Units)
        {
            o.WriteLine();
            o.WriteLine($"Unit {unit.Id} ({unit.SystemName}): {s.Windows} windows, {s.Reconciled} reconciled, {s.Steady} steady, {s.Samples:N0} samples from {s.From:u} to {s.To:u}");
            foreach ((int stage, double mean, double last) in s.Stages)
            {
                o.WriteLine(double.IsFinite(mean) ? $"  stage {stage}: efficiency mean {mean:F3}, last {last:F3}" : $"  stage {stage}: efficiency not determined");
            }

            if (double.IsFinite(s.Overall.TheoreticalStages))
            {
                o.WriteLine($"  theoretical stages {s.Overall.TheoreticalStages:F2}{(s.Overall.Hets is double h ? $", HETS {h:F2} m" : string.Empty)}");
            }

            o.WriteLine($"  soft sensor {s.SoftSensor.Name}: last {s.SoftSensor.Last:G4} (spec {unit.RaffinateSoluteSpec:G4}), {s.LabComparisons.Count} lab comparison(s)");
            o.WriteLine(s.Alerts.Count == 0 ? "  no alerts" : $"  {s.Alerts.Count} alert(s):");
            foreach (AlertEpisode a in s.Alerts)
            {
                o.WriteLine($"    {a.Raised:u} {a.Severity.ToString().ToLowerInvariant(),-6} {a.Key.Kind}{(a.Key.Stage is int st ? $" stage {st}" : string.Empty)}{(a.Key.Tag is null ? string.Empty : " " + a.Key.Tag)}: {a.Message}{(a.Cleared is { } c ? $" (cleared {c:u})" : string.Empty)}");
            }

            if (e is not null)
            {
                foreach (FaultDetection f in e.Faults)
                {
                    o.WriteLine($"  fault {Core.Scenarios.Fault.KindName(f.Fault.Kind)} from {f.Fault.Start:u}: {(f.Detected is { } d ? $"detected by {f.AlertKind} after {f.Delay:c}" : "not detected")}");
                }

                o.WriteLine($"  false alerts {e.FalseAlerts.Count}; soft sensor RMSE against the truth {e.SoftSensorRmseVsTruth:G3}");
                if (e.Efficiency.Count > 0)
                {
                    o.WriteLine($"  stage efficiencies of {e.Efficiency.Count} steady estimates against the truth: largest error {e.Efficiency.MaxAbs:F3}, RMSE {e.Efficiency.Rmse:F3}");
                }

                if (e.TheoreticalStages.Count > 0)
                {
                    o.WriteLine($"  theoretical stages against the truth: largest error {e.TheoreticalStages.MaxAbs:F2}, RMSE {e.TheoreticalStages.Rmse:F2}");
                }
            }
        }

        o.WriteLine();
        o.WriteLine(Notices.Advisory);
    }

    private static void Time(Utf8JsonWriter w, string name, DateTimeOffset? t)
    {
        if (t is { } v)
        {
            w.WriteString(name, v.UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ssZ", CultureInfo.InvariantCulture));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static void Number(Utf8JsonWriter w, string name, double? value)
    {
        if (value is double v && double.IsFinite(v))
        {
            w.WriteNumber(name, JsonOutput.Round(v));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    /// <summary>Where the report goes and what collects it.</summary>
    private sealed record ReportRequest(string Folder, ReportCollector Collector, IReadOnlyList<string> Sources);
}

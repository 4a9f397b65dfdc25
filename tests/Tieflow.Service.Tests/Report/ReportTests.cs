using System.Text.RegularExpressions;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.Service.Report;

namespace Tieflow.Service.Tests.Report;

/// <summary>The report's model and writer: a short simulated replay gives a page with every plot and table; memory stays bounded.</summary>
public sealed partial class ReportTests : IClassFixture<ReportTests.Fixture>
{
    private readonly Fixture _fixture;

    public ReportTests(Fixture fixture) => _fixture = fixture;

    [Fact]
    public void Replay_WithReport_WritesAPageWithEveryPlotAndTable_AndTheSvgFilesBesideIt()
    {
        SimulatedReport r = _fixture.Report;
        Assert.True(r.Run.ExitCode == 0, r.Run.Error);
        Assert.Contains("report: ", r.Run.Error, StringComparison.Ordinal);
        string html = File.ReadAllText(r.Page);
        foreach (string id in r.PlotIds)
        {
            Assert.Matches($"<figure class=\"plot\" id=\"{id}\">\\s*<svg ", html);
            string file = Path.Combine(r.Folder, id["plot-".Length..] + ".svg");
            Assert.True(File.Exists(file), file);
            Assert.StartsWith("<svg ", File.ReadAllText(file), StringComparison.Ordinal);
        }

        foreach (string id in r.TableIds)
        {
            Assert.Contains($"<table id=\"{id}\">", html.Replace("<table class=\"summary\" id=", "<table id=", StringComparison.Ordinal), StringComparison.Ordinal);
        }

        Assert.Contains("not a safety system", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_IsSelfContained_WithUniqueClipIds()
    {
        string html = File.ReadAllText(_fixture.Report.Page);

        // Nothing is fetched: no scripts, no links to other documents, no references to anything but the page itself.
        Assert.DoesNotContain("<script", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<link", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("@import", html, StringComparison.OrdinalIgnoreCase);
        string[] urls = [.. Url().Matches(html).Select(m => m.Value).Distinct()];
        Assert.All(urls, u => Assert.StartsWith("http://www.w3.org/", u, StringComparison.Ordinal));

        // ScottPlot numbers its clip paths per process: every one is renamed, and every id on the page is unique.
        Assert.DoesNotMatch(@"\bcl_[0-9a-fA-F]+\b", html);
        string[] ids = [.. IdAttribute().Matches(html).Select(m => m.Groups[1].Value)];
        Assert.Equal(ids.Length, ids.Distinct(StringComparer.Ordinal).Count());
        foreach (Match m in ClipReference().Matches(html))
        {
            Assert.Contains(m.Groups[1].Value, ids);
        }
    }

    [Fact]
    public void Report_ShowsTheFailingStage_TheSuspectAndTheLabResults()
    {
        string html = File.ReadAllText(_fixture.Report.Page);
        string alerts = Table(html, "table-X300-alerts");
        Assert.Contains("efficiency-drift stage 3", alerts, StringComparison.Ordinal);
        Assert.Contains("baseline", alerts, StringComparison.Ordinal); // the evidence
        Assert.Contains("FI-302", Table(html, "table-X300-suspects"), StringComparison.Ordinal);
        Assert.Contains("<td class=\"num\">", Table(html, "table-X300-labs"), StringComparison.Ordinal);
        Assert.Contains("raffinate-1", Table(html, "table-X300-streams"), StringComparison.Ordinal);
    }

    [Fact]
    public void Report_IsTheSameFromRunToRun()
    {
        SimulatedReport r = _fixture.Report;
        string again = Path.Combine(r.Folder, "..", "again");
        CliRun run = CliRun.Of("replay", "--plant", r.PlantPath, "--history", r.History, "--labs", r.Labs, "--report", again);

        Assert.True(run.ExitCode == 0, run.Error);

        // The first run also had the truth file (its evaluation table); the plots are the same SVG text.
        foreach (string id in r.PlotIds)
        {
            string name = id["plot-".Length..] + ".svg";
            Assert.Equal(File.ReadAllText(Path.Combine(r.Folder, name)), File.ReadAllText(Path.Combine(again, name)));
        }
    }

    [Fact]
    public void Report_IntoAFile_IsBadInput()
    {
        SimulatedReport r = _fixture.Report;
        CliRun run = CliRun.Of("replay", "--plant", r.PlantPath, "--history", r.History, "--report", r.History);

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("--report", run.Error, StringComparison.Ordinal);
        Assert.Contains("folder", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_OfAnEmptyHistory_StillHasEveryPlotAndTable_SayingThereIsNothing()
    {
        using var folder = new TempFolder();
        SimulatedReport r = _fixture.Report;
        string history = folder.Write("empty.history.csv", "time,tag,value,quality\n");
        string dir = Path.Combine(folder.Path, "report");

        CliRun run = CliRun.Of("replay", "--plant", r.PlantPath, "--history", history, "--report", dir);

        Assert.True(run.ExitCode == 0, run.Error);
        string html = File.ReadAllText(Path.Combine(dir, "index.html"));
        foreach (string id in r.PlotIds)
        {
            Assert.Contains($"id=\"{id}\"", html, StringComparison.Ordinal);
        }

        Assert.Contains("no alert was raised", html, StringComparison.Ordinal);
        Assert.Contains("no steady window", html, StringComparison.Ordinal);
    }

    [Fact]
    public void DecimatedSeries_KeepsAtMostItsCapacity_AndTheMean()
    {
        var s = new DecimatedSeries(100, TimeSpan.FromMinutes(10));
        var start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
        double sum = 0;
        const int n = 200_000;
        for (int i = 0; i < n; i++)
        {
            double v = Math.Sin(i / 500.0);
            sum += v;
            s.Add(start + TimeSpan.FromMinutes(10 * i), v, 0.01);
        }

        IReadOnlyList<SeriesPoint> points = s.Points();
        Assert.InRange(points.Count, 50, 100);
        Assert.Equal(n, s.Count);
        Assert.True(points.Zip(points.Skip(1)).All(p => p.First.Time < p.Second.Time));
        Assert.All(points, p => Assert.InRange(p.Value, p.Min, p.Max));
        Assert.All(points, p => Assert.Equal(0.01, p.Sigma, 12));

        // Every bucket holds whole input points: the count-weighted mean of the points is the mean of the input.
        long perBucket = (long)(s.Width / TimeSpan.FromMinutes(10));
        double weighted = points.Take(points.Count - 1).Sum(p => p.Value * perBucket) + (points[^1].Value * (n - (perBucket * (points.Count - 1))));
        Assert.Equal(sum / n, weighted / n, 9);
    }

    [Fact]
    public void Collector_OverAMonthOfWindows_KeepsBoundedSeriesAndTheLatestAlertsUpToItsCap()
    {
        PlantDescription plant = PlantReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json"));
        UnitDescription unit = plant.Units[0];
        var collector = new ReportCollector(plant, new ReportLimits(PointsPerSeries: 200, Alerts: 50));
        var start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
        int windows = 30 * 24 * 2;
        for (int w = 0; w < windows; w++)
        {
            DateTimeOffset t = start + TimeSpan.FromMinutes(30 * w);
            var batch = new List<MonitorRecord>
            {
                new StreamRecord(unit.Id, t, "feed", new EstimatedValue(1000, 5), new Dictionary<string, EstimatedValue>
                {
                    [unit.System.Solute.Id] = new(0.3, 0.001), [unit.System.Diluent.Id] = new(0.7, 0.001), [unit.System.Solvent.Id] = new(0, 0.0001),
                }),
            };
            for (int k = 1; k <= unit.Stages; k++)
            {
                batch.Add(new StageRecord(unit.Id, t, k, new EstimatedValue(0.9 - (0.0001 * w), 0.02), null, 298.15));
            }

            if (w % 10 == 0)
            {
                batch.Add(new AlertRecord(unit.Id, t, "entrainment", AlertSeverity.High, 2, null, true, "raised", new Dictionary<string, double> { ["fraction"] = 0.02 }));
            }
            else if (w % 10 == 5)
            {
                batch.Add(new AlertRecord(unit.Id, t, "entrainment", AlertSeverity.High, 2, null, false, string.Empty, new Dictionary<string, double>()));
            }

            batch.Add(new UnitRecord(unit.Id, t, 3, 10, Steady: w % 2 == 0, 1.5, 0.2, null));
            batch.Add(new SoftSensorRecord(unit.Id, t, "raffinate", 0.08, 0.004, 0));
            collector.Add(batch);
        }

        UnitReport report = collector.Units[0];
        Assert.All(report.Efficiency.Values, s => Assert.InRange(s.Points().Count, 1, 200));
        Assert.InRange(report.SoftSensor.Points().Count, 1, 200);
        Assert.Equal(windows, report.SoftSensor.Count);
        Assert.Equal(50, report.Alerts.Count);
        Assert.Equal((windows / 10) - 50, report.AlertsOmitted);
        Assert.All(report.Alerts, a => Assert.Equal(a.Raised + TimeSpan.FromMinutes(150), a.Cleared));
        Assert.Equal(start + TimeSpan.FromMinutes(30 * (windows - 2)), report.LastSteady!.Value.Time);
        Assert.Equal((windows, windows / 2, 0), report.Counts);
    }

    private static string Table(string html, string id)
    {
        int at = html.IndexOf($"id=\"{id}\"", StringComparison.Ordinal);
        Assert.True(at >= 0, $"no table {id}");
        int end = html.IndexOf("</table>", at, StringComparison.Ordinal);
        return html[at..end];
    }

    [GeneratedRegex(@"https?://[^\s""'<>)]+")]
    private static partial Regex Url();

    [GeneratedRegex(@"\sid=""([^""]+)""")]
    private static partial Regex IdAttribute();

    [GeneratedRegex(@"url\(#([^)]+)\)")]
    private static partial Regex ClipReference();

    /// <summary>One simulated replay with its report for every test of the class.</summary>
    public sealed class Fixture : IDisposable
    {
        internal SimulatedReport Report { get; } = new();

        public void Dispose() => Report.Dispose();
    }
}

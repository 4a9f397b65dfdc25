using System.Globalization;
using System.Net;
using System.Text;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Service.Output;

namespace Tieflow.Service.Report;

/// <summary>
/// Writes the report: <c>DIR/index.html</c>, one self-contained page (inline SVG plots, inline style, no scripts, no fonts
/// or anything else fetched), and each plot beside it as <c>DIR/&lt;unit&gt;-&lt;plot&gt;.svg</c>.
/// </summary>
internal static class ReportWriter
{
    /// <summary>The plots of every unit, by the suffix of their ids.</summary>
    public static readonly IReadOnlyList<string> PlotKinds = ["efficiency", "soft-sensor", "solvent-loss", "alerts", "global-test", "ternary"];

    /// <summary>The tables of every unit, by the suffix of their ids (evaluation only with a truth file).</summary>
    public static readonly IReadOnlyList<string> TableKinds = ["summary", "labs", "alerts", "suspects", "streams"];

    /// <summary>Writes the report into a folder (created when missing) and returns the path of its page.</summary>
    public static string Write(string folder, ReportHeader header, IReadOnlyList<UnitReport> units)
    {
        ArgumentNullException.ThrowIfNull(header);
        ArgumentNullException.ThrowIfNull(units);
        Directory.CreateDirectory(folder);
        var plots = new List<(UnitReport Unit, IReadOnlyList<ReportPlot> Plots)>();
        foreach (UnitReport u in units)
        {
            string id = HtmlId(u.Unit.Id);
            plots.Add((u, [
                ReportPlots.Efficiency(u, $"plot-{id}-efficiency"),
                ReportPlots.SoftSensor(u, $"plot-{id}-soft-sensor"),
                ReportPlots.SolventLoss(u, $"plot-{id}-solvent-loss"),
                ReportPlots.AlertTimeline(u, $"plot-{id}-alerts", u.From, u.To),
                ReportPlots.GlobalTest(u, $"plot-{id}-global-test"),
                ReportPlots.TernaryDiagram(u, $"plot-{id}-ternary"),
            ]));
        }

        foreach ((_, IReadOnlyList<ReportPlot> ps) in plots)
        {
            foreach (ReportPlot p in ps)
            {
                File.WriteAllText(Path.Combine(folder, p.Id["plot-".Length..] + ".svg"), p.Svg + "\n", new UTF8Encoding(false));
            }
        }

        string page = Path.Combine(folder, "index.html");
        File.WriteAllText(page, Page(header, plots), new UTF8Encoding(false));
        return page;
    }

    /// <summary>An id fragment made of letters, digits, '-' and '_' only.</summary>
    public static string HtmlId(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var sb = new StringBuilder(text.Length);
        foreach (char c in text)
        {
            sb.Append(char.IsAsciiLetterOrDigit(c) || c is '-' or '_' ? c : '-');
        }

        return sb.ToString();
    }

    private static string Page(ReportHeader header, List<(UnitReport Unit, IReadOnlyList<ReportPlot> Plots)> units)
    {
        var h = new StringBuilder(1 << 20);
        DateTimeOffset? from = units.Select(u => u.Unit.From).Where(t => t is not null).Min();
        DateTimeOffset? to = units.Select(u => u.Unit.To).Where(t => t is not null).Max();
        h.Append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
            .Append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
            .Append("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; img-src data:\">\n")
            .Append("<title>Tieflow replay report: ").Append(E(header.Site)).Append("</title>\n<style>\n").Append(Css).Append("</style>\n</head>\n<body>\n");
        h.Append("<header>\n<h1>Replay report: ").Append(E(header.Site)).Append("</h1>\n");
        h.Append("<p class=\"notice\" id=\"notice\">").Append(E(Notices.Advisory)).Append("</p>\n");
        h.Append("<p class=\"meta\">History from ").Append(Time(from)).Append(" to ").Append(Time(to)).Append(" (UTC): ")
            .Append(header.Rows.ToString("N0", CultureInfo.InvariantCulture)).Append(" rows into ")
            .Append(header.Records.ToString("N0", CultureInfo.InvariantCulture)).Append(" records. Inputs: ")
            .Append(E(string.Join(", ", header.Sources))).Append(".</p>\n");
        h.Append("<nav><ul>\n");
        foreach ((UnitReport u, _) in units)
        {
            h.Append("<li><a href=\"#unit-").Append(HtmlId(u.Unit.Id)).Append("\">Unit ").Append(E(u.Unit.Id)).Append("</a>: ").Append(E(Glance(u))).Append("</li>\n");
        }

        h.Append("</ul></nav>\n</header>\n<main>\n");
        foreach ((UnitReport u, IReadOnlyList<ReportPlot> plots) in units)
        {
            Unit(h, u, plots);
        }

        h.Append("</main>\n<footer><p>").Append(E(Notices.Advisory)).Append("</p></footer>\n</body>\n</html>\n");
        return h.ToString();
    }

    private static void Unit(StringBuilder h, UnitReport u, IReadOnlyList<ReportPlot> plots)
    {
        UnitDescription unit = u.Unit;
        string id = HtmlId(unit.Id);
        ReportPlot Plot(string kind) => plots.Single(p => p.Id == $"plot-{id}-{kind}");
        h.Append("<section class=\"unit\" id=\"unit-").Append(id).Append("\">\n<h2>Unit ").Append(E(unit.Id)).Append("</h2>\n<p class=\"meta\">")
            .Append(unit.Kind == UnitKind.Column ? $"extraction column, {unit.Stages} theoretical stages at design" : $"mixer-settler train, {unit.Stages} stages")
            .Append(", ").Append(unit.Arrangement.ToString().ToLowerInvariant()).Append("; system ").Append(E(unit.SystemName)).Append("</p>\n");

        SummaryTable(h, u, id);
        h.Append("<h3>Stage efficiencies</h3>\n");
        Figure(h, Plot("efficiency"));
        h.Append("<h3>Raffinate: soft sensor, analyzer and lab</h3>\n");
        Figure(h, Plot("soft-sensor"));
        LabTable(h, u, id);
        h.Append("<h3>Solvent losses</h3>\n");
        Figure(h, Plot("solvent-loss"));
        h.Append("<h3>Alerts</h3>\n");
        Figure(h, Plot("alerts"));
        AlertTable(h, u, id);
        h.Append("<h3>Reconciliation and its suspects</h3>\n");
        Figure(h, Plot("global-test"));
        SuspectTable(h, u, id);
        h.Append("<h3>Ternary diagram of the last steady window</h3>\n");
        Figure(h, Plot("ternary"));
        StreamTable(h, u, id);
        if (u.Evaluation is { } e)
        {
            h.Append("<h3>Evaluation against the simulator's ground truth</h3>\n");
            EvaluationTable(h, e, id);
        }

        h.Append("</section>\n");
    }

    private static string Glance(UnitReport u)
    {
        int active = u.Alerts.Count(a => a.Cleared is null);
        string soft = double.IsFinite(u.SoftSensor.Last) ? $"raffinate {u.SoftSensor.Last.ToString("G4", CultureInfo.InvariantCulture)} against a spec of {u.Unit.RaffinateSoluteSpec.ToString("G4", CultureInfo.InvariantCulture)}" : "no soft-sensor value";
        return $"{soft}; {u.Alerts.Count + u.AlertsOmitted} alert(s) raised, {active} still active at the end";
    }

    private static void SummaryTable(StringBuilder h, UnitReport u, string id)
    {
        UnitSummary? s = u.Summary;
        var rows = new List<(string, string)>
        {
            ("period (UTC)", $"{Time(u.From)} to {Time(u.To)}"),
            ("windows", (s is null ? string.Empty : $"{s.Windows} closed, ") + $"{u.Counts.Windows} reconciled, {u.Counts.Steady} steady ({Percent(u.Counts.Steady, u.Counts.Windows)}), global test failed in {u.Counts.GlobalTestFailed}"
                + (s is { Failures: > 0 } ? $"; {s.Failures} could not be reconciled (last: {s.LastFailure})" : string.Empty)),
        };
        if (s is not null)
        {
            foreach ((int stage, double mean, double last) in s.Stages)
            {
                if (u.Unit.Kind == UnitKind.Column && stage > 1)
                {
                    break;
                }

                string name = u.Unit.Kind == UnitKind.Column ? "efficiency (every theoretical stage)" : $"stage {stage} efficiency";
                rows.Add((name, double.IsFinite(mean) ? $"last {F(last, "F3")}, mean {F(mean, "F3")} (design {F(u.Unit.Nominal.Efficiencies[stage - 1], "F2")})" : "not determined"));
            }

            (double e, double sigma, double theoretical, double? hets) = s.Overall;
            if (double.IsFinite(theoretical))
            {
                rows.Add(("theoretical stages", $"{F(theoretical, "F2")}" + (hets is double ht ? $", HETS {F(ht, "F2")} m" : string.Empty)
                    + (double.IsFinite(e) ? $" (shared efficiency {F(e, "F3")}, sigma {F(sigma, "F3")})" : string.Empty)));
            }
        }

        rows.Add(("raffinate soft sensor", double.IsFinite(u.SoftSensor.Last) ? $"last {F(u.SoftSensor.Last, "G4")} against a spec of {F(u.Unit.RaffinateSoluteSpec, "G4")}" : "no value"));
        rows.Add(("lab results compared", (s?.LabComparisons.Count ?? 0).ToString(CultureInfo.InvariantCulture)));
        int active = u.Alerts.Count(a => a.Cleared is null);
        rows.Add(("alerts", $"{u.Alerts.Count + u.AlertsOmitted} raised, {active} still active at the end" + (u.AlertsOmitted > 0 ? $" ({u.AlertsOmitted} oldest not listed)" : string.Empty)));
        h.Append("<table class=\"summary\" id=\"table-").Append(id).Append("-summary\">\n<caption>At a glance</caption>\n<tbody>\n");
        foreach ((string k, string v) in rows)
        {
            h.Append("<tr><th scope=\"row\">").Append(E(k)).Append("</th><td>").Append(E(v)).Append("</td></tr>\n");
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void LabTable(StringBuilder h, UnitReport u, string id)
    {
        IReadOnlyList<LabComparison> all = u.Summary?.LabComparisons ?? [];
        int skip = Math.Max(0, all.Count - u.Limits.LabRows);
        h.Append("<table id=\"table-").Append(id).Append("-labs\">\n<caption>Lab results of the final raffinate against the soft sensor at the sampling time")
            .Append(skip > 0 ? $" (the latest {all.Count - skip} of {all.Count})" : string.Empty).Append("</caption>\n")
            .Append("<thead><tr><th>sampled</th><th>reported</th><th class=\"num\">lab</th><th class=\"num\">soft sensor</th><th class=\"num\">difference</th><th class=\"num\">in sigma</th></tr></thead>\n<tbody>\n");
        if (all.Count == 0)
        {
            h.Append("<tr><td colspan=\"6\">no lab result of the final raffinate</td></tr>\n");
        }

        foreach (LabComparison l in all.Skip(skip))
        {
            double d = l.Lab - l.Predicted;
            h.Append("<tr><td>").Append(Time(l.Sampled)).Append("</td><td>").Append(Time(l.Reported)).Append("</td>")
                .Append(Num(F(l.Lab, "G4"))).Append(Num(F(l.Predicted, "G4"))).Append(Num(F(d, "G3"))).Append(Num(l.Sigma > 0 ? F(d / l.Sigma, "F1") : "-")).Append("</tr>\n");
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void AlertTable(StringBuilder h, UnitReport u, string id)
    {
        h.Append("<table id=\"table-").Append(id).Append("-alerts\">\n<caption>Every alert with its evidence")
            .Append(u.AlertsOmitted > 0 ? $" (the latest {u.Alerts.Count}; {u.AlertsOmitted} older not listed)" : string.Empty).Append("</caption>\n")
            .Append("<thead><tr><th>raised</th><th>cleared</th><th>severity</th><th>alert</th><th>what was seen</th><th>evidence</th></tr></thead>\n<tbody>\n");
        if (u.Alerts.Count == 0)
        {
            h.Append("<tr><td colspan=\"6\">no alert was raised</td></tr>\n");
        }

        foreach (ReportAlert a in u.Alerts)
        {
            string severity = a.Severity switch { AlertSeverity.High => "\u25A0 high", AlertSeverity.Medium => "\u25B2 medium", _ => "\u25CF low" };
            h.Append("<tr class=\"").Append(a.Severity.ToString().ToLowerInvariant()).Append("\"><td>").Append(Time(a.Raised)).Append("</td><td>")
                .Append(a.Cleared is { } c ? Time(c) : "<strong>active</strong>").Append("</td><td>").Append(severity).Append("</td><td>")
                .Append(E(a.Label)).Append("</td><td>").Append(E(a.Message)).Append("</td><td class=\"evidence\">").Append(E(Evidence(a.Evidence))).Append("</td></tr>\n");
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void SuspectTable(StringBuilder h, UnitReport u, string id)
    {
        var suspects = u.Alerts.Where(a => a.Key.Tag is not null)
            .GroupBy(a => (a.Key.Tag!, a.Key.Kind))
            .OrderBy(g => g.Min(a => a.Raised))
            .ToList();
        h.Append("<table id=\"table-").Append(id).Append("-suspects\">\n<caption>Instruments the reconciliation or the signal checks named</caption>\n")
            .Append("<thead><tr><th>tag</th><th>why</th><th class=\"num\">times</th><th>first raised</th><th>last cleared</th><th>last message</th></tr></thead>\n<tbody>\n");
        if (suspects.Count == 0)
        {
            h.Append("<tr><td colspan=\"6\">no instrument was named</td></tr>\n");
        }

        foreach (var g in suspects)
        {
            ReportAlert last = g.MaxBy(a => a.Raised)!;
            string why = g.Key.Kind == "suspect-instrument" ? "disagrees with the balances (gross-error tests)" : "signal checks (" + g.Key.Kind + ")";
            h.Append("<tr><td>").Append(E(g.Key.Item1)).Append("</td><td>").Append(E(why)).Append("</td>").Append(Num(g.Count().ToString(CultureInfo.InvariantCulture)))
                .Append("<td>").Append(Time(g.Min(a => a.Raised))).Append("</td><td>").Append(last.Cleared is { } c ? Time(c) : "<strong>active</strong>")
                .Append("</td><td>").Append(E(last.Message)).Append("</td></tr>\n");
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void StreamTable(StringBuilder h, UnitReport u, string id)
    {
        string[] components = [u.Unit.System.Solute.Id, u.Unit.System.Diluent.Id, u.Unit.System.Solvent.Id];
        string flowUnit = u.Unit.System.Basis == Core.Chemistry.CompositionBasis.Mass ? "kg/h" : "kmol/h";
        h.Append("<table id=\"table-").Append(id).Append("-streams\">\n<caption>Reconciled streams of the last steady window")
            .Append(u.LastSteady is { } ls ? $" (ending {Time(ls.Time)})" : string.Empty).Append(", each with its sigma</caption>\n<thead><tr><th>stream</th><th class=\"num\">flow ")
            .Append(flowUnit).Append("</th>");
        foreach (string c in components)
        {
            h.Append("<th class=\"num\">").Append(E(c)).Append("</th>");
        }

        h.Append("</tr></thead>\n<tbody>\n");
        if (u.LastSteady is null)
        {
            h.Append("<tr><td colspan=\"").Append(2 + components.Length).Append("\">no steady window</td></tr>\n");
        }
        else
        {
            foreach (StreamRecord s in u.LastSteady.Value.Streams)
            {
                h.Append("<tr><td>").Append(E(s.Stream)).Append("</td>").Append(Num($"{F(s.Flow.Value, "F1")} \u00B1 {F(s.Flow.Sigma, "F1")}"));
                foreach (string c in components)
                {
                    h.Append(Num(s.Fractions.TryGetValue(c, out EstimatedValue v) ? $"{F(v.Value, "F4")} \u00B1 {F(v.Sigma, "F4")}" : "-"));
                }

                h.Append("</tr>\n");
            }
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void EvaluationTable(StringBuilder h, EvaluationResult e, string id)
    {
        h.Append("<table id=\"table-").Append(id).Append("-evaluation\">\n<caption>Injected faults and whether they were detected; ")
            .Append(e.FalseAlerts.Count).Append(" false alert(s); soft sensor RMSE against the true raffinate ").Append(F(e.SoftSensorRmseVsTruth, "G3"))
            .Append("</caption>\n<thead><tr><th>fault</th><th>start</th><th>detected</th><th>by</th><th>delay</th></tr></thead>\n<tbody>\n");
        if (e.Faults.Count == 0)
        {
            h.Append("<tr><td colspan=\"5\">no fault was injected</td></tr>\n");
        }

        foreach (FaultDetection f in e.Faults)
        {
            string what = Core.Scenarios.Fault.KindName(f.Fault.Kind) + (f.Fault.Stage is int st ? $" stage {st}" : string.Empty) + (f.Fault.Tag is null ? string.Empty : " " + f.Fault.Tag);
            h.Append("<tr><td>").Append(E(what)).Append("</td><td>").Append(Time(f.Fault.Start)).Append("</td><td>").Append(f.Detected is { } d ? Time(d) : "<strong>not detected</strong>")
                .Append("</td><td>").Append(E(f.AlertKind ?? "-")).Append("</td><td>").Append(f.Delay is { } delay ? delay.ToString("c", CultureInfo.InvariantCulture) : "-").Append("</td></tr>\n");
        }

        h.Append("</tbody>\n</table>\n");
    }

    private static void Figure(StringBuilder h, ReportPlot p)
    {
        h.Append("<figure class=\"plot\" id=\"").Append(p.Id).Append("\">\n").Append(p.Svg).Append("\n<figcaption><strong>").Append(E(p.Title)).Append(".</strong> ")
            .Append(E(p.Caption)).Append(" <span class=\"file\">(also as ").Append(E(p.Id["plot-".Length..])).Append(".svg)</span></figcaption>\n</figure>\n");
    }

    private static string Evidence(IReadOnlyDictionary<string, double> evidence) =>
        string.Join("; ", evidence.Select(kv => $"{kv.Key} {F(kv.Value, "G4")}"));

    private static string Num(string text) => "<td class=\"num\">" + E(text) + "</td>";

    private static string F(double v, string format) => double.IsFinite(v) ? v.ToString(format, CultureInfo.InvariantCulture) : "-";

    private static string Percent(int part, int whole) => whole > 0 ? (100.0 * part / whole).ToString("F0", CultureInfo.InvariantCulture) + " %" : "-";

    private static string Time(DateTimeOffset? t) => t is { } v ? v.UtcDateTime.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) : "-";

    private static string E(string text) => WebUtility.HtmlEncode(text);

    private const string Css = """
        :root { color: #000; background: #fff; }
        body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; font-size: 14px; line-height: 1.45; max-width: 980px; margin: 1.5em auto; padding: 0 1em; }
        h1 { font-size: 1.6em; margin: 0 0 .4em; padding-bottom: .2em; border-bottom: 3px double #000; }
        h2 { font-size: 1.35em; margin: 2.2em 0 .3em; padding-bottom: .15em; border-bottom: 2px solid #000; }
        h3 { font-size: 1em; margin: 1.8em 0 .4em; text-transform: uppercase; letter-spacing: .06em; }
        .notice { border: 2px solid #000; padding: .5em .8em; font-weight: bold; }
        .meta { color: #333; }
        nav ul { padding-left: 1.2em; }
        figure { margin: .8em 0 1.2em; break-inside: avoid; page-break-inside: avoid; }
        figure svg { display: block; width: 100%; height: auto; border: 1px solid #888; }
        figure[id$="-ternary"] svg { max-width: 640px; }
        figcaption { font-size: .88em; color: #222; margin-top: .3em; }
        .file { color: #555; }
        table { border-collapse: collapse; width: 100%; font-size: .88em; margin: .6em 0 1.2em; }
        caption { text-align: left; font-weight: bold; padding-bottom: .3em; }
        th, td { border-bottom: 1px solid #aaa; padding: .2em .5em; text-align: left; vertical-align: top; }
        thead th { border-bottom: 2px solid #000; }
        table.summary th { width: 14em; font-weight: normal; color: #333; }
        td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
        td.evidence { font-size: .92em; color: #333; }
        tr.high td { font-weight: bold; }
        a { color: #000; }
        @media print {
          body { max-width: none; margin: 0; font-size: 9.5pt; }
          nav { display: none; }
          section.unit { break-before: page; page-break-before: always; }
          a { text-decoration: none; }
          thead { display: table-header-group; }
          tr { break-inside: avoid; page-break-inside: avoid; }
        }

        """;
}

using System.Globalization;
using System.Text.RegularExpressions;
using ScottPlot;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Service.Output;

namespace Tieflow.Service.Report;

/// <summary>
/// The plots of a unit, drawn with ScottPlot as SVG. Plain and readable in grey scale: black and greys only, every series
/// told apart by its line pattern and marker shape, sigma bands as a light grey fill.
/// </summary>
internal static partial class ReportPlots
{
    public const int Width = 900;
    public const int Height = 340;
    private const string FontName = "DejaVu Sans";
    private const int MarkersPerSeries = 24;
    private static readonly Color Ink = Colors.Black;
    private static readonly Color Grey = new(96, 96, 96);
    private static readonly Color LightGrey = new(170, 170, 170);
    // Skia's SVG writer drops the opacity of pure black (#000000 with alpha): translucent greys are made from #010101.
    private static readonly Color BandGrey = new(1, 1, 1, 40);
    // ScottPlot's SVG output draws every line solid (its SVG canvas has no dash effects): series differ by marker shape,
    // grey level and width; reference lines are drawn as dashes of their own.
    private static readonly (MarkerShape Marker, Color Colour, float Width)[] Styles =
    [
        (MarkerShape.FilledCircle, Ink, 1.8f),
        (MarkerShape.OpenSquare, Grey, 1.4f),
        (MarkerShape.FilledTriangleUp, Ink, 1.0f),
        (MarkerShape.OpenDiamond, Grey, 1.0f),
        (MarkerShape.Cross, Ink, 1.4f),
        (MarkerShape.FilledSquare, Grey, 1.8f),
        (MarkerShape.OpenCircle, Ink, 1.0f),
        (MarkerShape.FilledDiamond, Grey, 1.4f),
    ];

    /// <summary>Stage efficiencies with their sigma bands against time.</summary>
    public static ReportPlot Efficiency(UnitReport u, string id)
    {
        Plot plot = NewTimePlot("Murphree efficiency (raffinate)");
        var legend = new List<LegendItem>();
        bool shared = u.Unit.Kind == UnitKind.Column;
        int style = 0;
        foreach ((int stage, DecimatedSeries series) in u.Efficiency.OrderBy(e => e.Key))
        {
            if (shared && stage > 1)
            {
                break;
            }

            string label = shared ? "unit (every theoretical stage)" : $"stage {stage}";
            AddSeries(plot, series, label, style++, band: true, legend);
        }

        double design = u.Unit.Nominal.Efficiencies.Take(shared ? 1 : u.Unit.Stages).Average();
        TimeDashes(plot, u, design, Grey, 1);
        legend.Add(LineItem("design (mean), dashed", Grey, MarkerShape.None, width: 1));
        Finish(plot, legend, u.Efficiency.Values.All(s => s.Count == 0) ? "no steady window gave an efficiency" : null);
        return new ReportPlot(id, "Stage efficiencies", Svg(plot, id, Width, Height),
            "Murphree efficiency on the solute in the raffinate phase, steady windows only; the grey band is one sigma either side. "
            + (shared ? "A column's theoretical stages share one efficiency fitted to its terminal streams. " : string.Empty)
            + "The dashed line is the design efficiency.");
    }

    /// <summary>The raffinate soft sensor against the online analyzers and the lab results.</summary>
    public static ReportPlot SoftSensor(UnitReport u, string id)
    {
        string solute = u.Unit.System.Solute.Id;
        Plot plot = NewTimePlot($"{solute} in the final raffinate ({Basis(u.Unit)} fraction)");
        var legend = new List<LegendItem>();
        AddSeries(plot, u.SoftSensor, "soft sensor", 0, band: true, legend);
        int style = 1;
        foreach ((string tag, DecimatedSeries s) in u.Analyzers.OrderBy(a => a.Key, StringComparer.Ordinal))
        {
            AddSeries(plot, s, $"analyzer {tag}", style++, band: false, legend);
        }

        if (u.Summary is { LabComparisons.Count: > 0 } summary)
        {
            double[] xs = [.. summary.LabComparisons.Select(l => X(l.Sampled))];
            double[] ys = [.. summary.LabComparisons.Select(l => l.Lab)];
            var labs = plot.Add.Markers(xs, ys, MarkerShape.FilledSquare, 7, Ink);
            labs.MarkerLineColor = Colors.White;
            legend.Add(LineItem("lab result (at sampling)", Ink, MarkerShape.FilledSquare, line: false));
        }

        TimeDashes(plot, u, u.Unit.RaffinateSoluteSpec, Ink, 2);
        legend.Add(LineItem("spec, dashed", Ink, MarkerShape.None, width: 2));
        Finish(plot, legend, u.SoftSensor.Count == 0 ? "the soft sensor had no value" : null);
        return new ReportPlot(id, "Soft sensor against analyzer and lab", Svg(plot, id, Width, Height),
            "The soft sensor (the cascade model at the reconciled flows and today's efficiencies, lab bias included) with its one-sigma band; "
            + "the online analyzers' readings at the process time they describe (their dead time earlier); lab results at the time the sample was drawn; the spec.");
    }

    /// <summary>Solvent leaving dissolved and solvent the balance does not account for.</summary>
    public static ReportPlot SolventLoss(UnitReport u, string id)
    {
        string unit = u.Unit.System.Basis == CompositionBasis.Mass ? "kg/h" : "kmol/h";
        Plot plot = NewTimePlot($"solvent ({unit})");
        var legend = new List<LegendItem>();
        AddSeries(plot, u.SolventDissolved, "dissolved in the raffinate", 0, band: false, legend);
        AddSeries(plot, u.SolventUnaccounted, "unaccounted for", 1, band: false, legend);
        plot.Add.HorizontalLine(0, 1, LightGrey);
        Finish(plot, legend, u.SolventDissolved.Count + u.SolventUnaccounted.Count == 0 ? "no reconciled window" : null);
        return new ReportPlot(id, "Solvent losses", Svg(plot, id, Width, Height),
            "Solvent leaving dissolved in the final raffinate (reconciled) and solvent in by the solvent meter that no measured outlet accounts for, per window.");
    }

    /// <summary>The reconciliation's global test over its critical value.</summary>
    public static ReportPlot GlobalTest(UnitReport u, string id)
    {
        Plot plot = NewTimePlot("global test / critical value");
        var legend = new List<LegendItem>();
        AddSeries(plot, u.GlobalTestRatio, "global test statistic / critical", 0, band: false, legend);
        TimeDashes(plot, u, 1, Ink, 2);
        legend.Add(LineItem("critical value, dashed", Ink, MarkerShape.None, width: 2));
        Finish(plot, legend, u.GlobalTestRatio.Count == 0 ? "no reconciled window" : null);
        plot.Axes.SetLimitsY(0, Math.Max(2, u.GlobalTestRatio.Points().Select(p => p.Max).DefaultIfEmpty(0).Max() * 1.05));
        return new ReportPlot(id, "Reconciliation: global test", Svg(plot, id, Width, Height),
            "The chi-square statistic of the reconciliation's global test over its critical value, per window (mean per point when the history is long): above one the measurements do not fit the balances and the gross-error tests name suspects.");
    }

    /// <summary>The alerts on a time line: one row per alert, a bar from raise to clear, the marker by severity.</summary>
    public static ReportPlot AlertTimeline(UnitReport u, string id, DateTimeOffset? from, DateTimeOffset? to)
    {
        string[] rows = [.. u.Alerts.Select(a => a.Label).Distinct(StringComparer.Ordinal)];
        int height = Math.Max(190, 110 + (26 * rows.Length));
        Plot plot = NewTimePlot(string.Empty);
        double end = X(to ?? u.To ?? DateTimeOffset.UnixEpoch);
        double start = X(from ?? u.From ?? DateTimeOffset.UnixEpoch);
        foreach (ReportAlert a in u.Alerts)
        {
            double y = rows.Length - Array.IndexOf(rows, a.Label);
            double x1 = X(a.Raised), x2 = a.Cleared is { } c ? X(c) : end;
            var bar = plot.Add.Line(x1, y, Math.Max(x2, x1), y);
            bar.LineWidth = 7;
            bar.LineColor = a.Severity switch { AlertSeverity.High => Ink, AlertSeverity.Medium => Grey, _ => LightGrey };
            bar.MarkerShape = MarkerShape.None;
            plot.Add.Marker(x1, y, SeverityMarker(a.Severity), 10, Ink);
            if (a.Cleared is null)
            {
                plot.Add.Marker(end, y, MarkerShape.OpenCircle, 10, Ink);
            }
        }

        plot.Axes.Left.SetTicks([.. Enumerable.Range(0, rows.Length).Select(i => (double)(rows.Length - i))], rows);
        plot.Axes.SetLimitsY(0.3, rows.Length + 0.7);
        if (end > start)
        {
            plot.Axes.SetLimitsX(start, end + ((end - start) * 0.01));
        }

        plot.Grid.YAxisStyle.MajorLineStyle.Width = 0;
        var legend = new List<LegendItem>
        {
            LineItem("high", Ink, SeverityMarker(AlertSeverity.High), line: false),
            LineItem("medium", Ink, SeverityMarker(AlertSeverity.Medium), line: false),
            LineItem("low", Ink, SeverityMarker(AlertSeverity.Low), line: false),
            LineItem("still active at the end", Ink, MarkerShape.OpenCircle, line: false),
        };
        Finish(plot, legend, rows.Length == 0 ? "no alert was raised" : null);
        return new ReportPlot(id, "Alerts on a time line", Svg(plot, id, Width, height),
            "One row per alert (kind with its stage or tag); the bar runs from raise to clear, black for high, dark grey for medium, light grey for low severity; "
            + "the marker at the start gives the severity (square high, triangle medium, circle low).");
    }

    /// <summary>
    /// The ternary diagram of the unit's system: the binodal, tie lines (the measured ones of a tie-line table, otherwise
    /// traced from the model) and the reconciled streams of the last steady window.
    /// </summary>
    public static ReportPlot TernaryDiagram(UnitReport u, string id)
    {
        UnitDescription unit = u.Unit;
        IPhaseEquilibrium model = unit.Equilibrium;
        double t = u.LastSteady?.TemperatureKelvin is double tk && model.ValidTemperatures.Contains(tk) ? tk : unit.Nominal.TemperatureKelvin;
        var plot = new Plot();
        plot.HideAxesAndGrid();

        // Triangle, grid at every 0.1 and the corner names.
        for (int i = 1; i < 10; i++)
        {
            double f = i / 10.0;
            foreach ((Ternary a, Ternary b) in new[]
            {
                (new Ternary(f, 1 - f, 0), new Ternary(f, 0, 1 - f)),
                (new Ternary(0, f, 1 - f), new Ternary(1 - f, f, 0)),
                (new Ternary(0, 1 - f, f), new Ternary(1 - f, 0, f)),
            })
            {
                var g = plot.Add.Line(Project(a), Project(b));
                g.LineColor = new Color(1, 1, 1, 28);
                g.LineWidth = 1;
            }
        }

        Coordinates top = Project(new Ternary(1, 0, 0)), left = Project(new Ternary(0, 1, 0)), right = Project(new Ternary(0, 0, 1));
        var frame = plot.Add.Polygon([left, right, top]);
        frame.FillColor = Colors.Transparent;
        frame.LineColor = Ink;
        frame.LineWidth = 1.5f;
        Label(plot, unit.System.Solute.Id, top, Alignment.LowerCenter, 0, -6);
        Label(plot, unit.System.Diluent.Id, left, Alignment.UpperCenter, 0, 6);
        Label(plot, unit.System.Solvent.Id, right, Alignment.UpperCenter, 0, 6);

        var legend = new List<LegendItem>();
        List<TieLine> traced = EnvelopeTrace.TieLines(model, t, 60, 0.999, includeZero: true);
        if (traced.Count > 1)
        {
            Coordinates[] binodal = [.. traced.Select(l => Project(l.Raffinate)), .. traced.AsEnumerable().Reverse().Select(l => Project(l.Extract))];
            var b = plot.Add.ScatterLine(binodal, Ink);
            b.LineWidth = 2;
            legend.Add(LineItem($"binodal at {t:F1} K", Ink, MarkerShape.None, width: 2));
        }

        // An isotherm of immiscible liquids says nothing far beyond the solute fractions in use: its tie lines are traced
        // up to three times the largest solute fraction of the feed and the shown streams.
        double reach = 0.9;
        if (model is Core.Equilibrium.Distribution.DistributionModel)
        {
            double largest = unit.Nominal.Feed.Composition.Solute;
            foreach (StreamRecord s in u.LastSteady?.Streams ?? [])
            {
                if (TryComposition(unit.System, s, out Ternary x))
                {
                    largest = Math.Max(largest, x.Solute);
                }
            }

            reach = Math.Clamp(3 * largest, 0.01, 0.9);
        }

        IReadOnlyList<TieLine> tieLines = model is TieLineTableModel table ? table.TieLines : EnvelopeTrace.TieLines(model, t, 6, reach);
        foreach (TieLine l in tieLines)
        {
            Dashes(plot, Project(l.Raffinate), Project(l.Extract), 0.012, Grey, 1);
            plot.Add.Marker(Project(l.Raffinate), MarkerShape.OpenCircle, 5, Grey);
            plot.Add.Marker(Project(l.Extract), MarkerShape.OpenCircle, 5, Grey);
        }

        if (tieLines.Count > 0)
        {
            legend.Add(LineItem(model is TieLineTableModel ? "tie lines (measured), dashed" : "tie lines (model), dashed", Grey, MarkerShape.OpenCircle, width: 1));
        }

        if (u.LastSteady is { } steady)
        {
            var kinds = new HashSet<string>(StringComparer.Ordinal);
            foreach (StreamRecord s in steady.Streams)
            {
                if (!TryComposition(unit.System, s, out Ternary x))
                {
                    continue;
                }

                (MarkerShape shape, string kind) = StreamMarker(s.Stream);
                Coordinates at = Project(x);
                var m = plot.Add.Marker(at, shape, 9, Ink);
                m.MarkerLineWidth = 1.5f;
                Label(plot, s.Stream, at, Alignment.MiddleLeft, 7, 0, 11);
                if (kinds.Add(kind))
                {
                    legend.Add(LineItem(kind, Ink, shape, line: false));
                }
            }
        }

        plot.Axes.SquareUnits();
        plot.Axes.SetLimits(-0.08, 1.08, -0.1, top.Y + 0.08);
        Finish(plot, legend, u.LastSteady is null ? "no steady window: no reconciled streams to show" : null, Alignment.UpperRight);
        string when = u.LastSteady is { } ls ? $" of the last steady window (ending {ls.Time.UtcDateTime:yyyy-MM-dd HH:mm} UTC)" : string.Empty;
        return new ReportPlot(id, "Ternary diagram", Svg(plot, id, 640, 560),
            $"{Basis(unit)} fractions of {unit.System.Solute.Id} (top), {unit.System.Diluent.Id} (left) and {unit.System.Solvent.Id} (right); "
            + $"the binodal and tie lines of the system '{unit.SystemName}', and the reconciled streams{when}.");
    }

    /// <summary>Maps a composition to the plane: diluent bottom left, solvent bottom right, solute at the top.</summary>
    public static Coordinates Project(Ternary x) => new(x.Solvent + (0.5 * x.Solute), x.Solute * Math.Sqrt(3) / 2);

    /// <summary>
    /// The SVG of a plot without the XML declaration, with ScottPlot's clip ids (a per-process counter) renamed after the
    /// plot's id in order of appearance: unique on a page of several plots and the same from run to run.
    /// </summary>
    public static string Svg(Plot plot, string id, int width, int height)
    {
        ArgumentNullException.ThrowIfNull(plot);
        return NormaliseSvg(plot.GetSvgXml(width, height), id, width, height);
    }

    internal static string NormaliseSvg(string svg, string id, int width, int height)
    {
        int declaration = svg.IndexOf("?>", StringComparison.Ordinal);
        if (svg.StartsWith("<?xml", StringComparison.Ordinal) && declaration >= 0)
        {
            svg = svg[(declaration + 2)..].TrimStart();
        }

        var names = new Dictionary<string, string>(StringComparer.Ordinal);
        svg = ClipId().Replace(svg, m =>
        {
            if (!names.TryGetValue(m.Value, out string? name))
            {
                names[m.Value] = name = $"{id}-clip{names.Count + 1}";
            }

            return name;
        });

        // A view box lets the page scale the plot to its column; the role and the id make it findable.
        string open = string.Create(CultureInfo.InvariantCulture, $"<svg role=\"img\" aria-label=\"{id}\" viewBox=\"0 0 {width} {height}\" ");
        return svg.StartsWith("<svg ", StringComparison.Ordinal) ? open + svg[5..] : svg;
    }

    [GeneratedRegex(@"\bcl_[0-9a-fA-F]+\b")]
    private static partial Regex ClipId();

    private static Plot NewTimePlot(string yLabel)
    {
        var plot = new Plot();
        var axis = plot.Axes.DateTimeTicksBottom();
        if (axis.TickGenerator is ScottPlot.TickGenerators.DateTimeAutomatic ticks)
        {
            // ISO dates, never a locale's day and month order.
            ticks.LabelFormatter = t => t.ToString(t.TimeOfDay == TimeSpan.Zero ? "yyyy-MM-dd" : "MM-dd HH:mm", CultureInfo.InvariantCulture);
        }

        plot.XLabel("time (UTC)", 12);
        if (yLabel.Length > 0)
        {
            plot.YLabel(yLabel, 12);
        }

        plot.Grid.MajorLineColor = new Color(1, 1, 1, 26);
        return plot;
    }

    /// <summary>Adds a series as line segments (broken at gaps), thinned markers and, optionally, its sigma band.</summary>
    private static void AddSeries(Plot plot, DecimatedSeries series, string label, int style, bool band, List<LegendItem> legend)
    {
        IReadOnlyList<SeriesPoint> points = series.Points();
        (MarkerShape marker, Color colour, float width) = Styles[style % Styles.Length];
        legend.Add(LineItem(label + (points.Count == 0 ? " (none)" : string.Empty), colour, marker, width: width));
        if (points.Count == 0)
        {
            return;
        }

        double gap = 3 * series.Width.TotalDays;
        foreach (IReadOnlyList<SeriesPoint> segment in Segments(points, gap))
        {
            double[] xs = [.. segment.Select(p => X(p.Time))];
            double[] ys = [.. segment.Select(p => p.Value)];
            if (band && segment.Any(p => p.Sigma > 0) && segment.Count > 1)
            {
                var fill = plot.Add.FillY(xs, [.. segment.Select(p => p.Value - p.Sigma)], [.. segment.Select(p => p.Value + p.Sigma)]);
                fill.FillColor = BandGrey;
                fill.LineWidth = 0;
            }

            var line = plot.Add.ScatterLine(xs, ys, colour);
            line.LineWidth = width;
            if (segment.Count == 1)
            {
                line.MarkerShape = marker;
                line.MarkerSize = 6;
            }
        }

        int every = Math.Max(1, points.Count / MarkersPerSeries);
        int offset = (style * every / Styles.Length) % every;
        SeriesPoint[] thinned = [.. points.Where((_, i) => i % every == offset)];
        double[] mx = [.. thinned.Select(p => X(p.Time))], my = [.. thinned.Select(p => p.Value)];
        plot.Add.Markers(mx, my, marker, 6, colour);
    }

    private static IEnumerable<IReadOnlyList<SeriesPoint>> Segments(IReadOnlyList<SeriesPoint> points, double gapDays)
    {
        var current = new List<SeriesPoint>();
        foreach (SeriesPoint p in points)
        {
            if (current.Count > 0 && X(p.Time) - X(current[^1].Time) > gapDays)
            {
                yield return current;
                current = [];
            }

            current.Add(p);
        }

        if (current.Count > 0)
        {
            yield return current;
        }
    }

    private static void Finish(Plot plot, List<LegendItem> legend, string? emptyNote, Alignment? inside = null)
    {
        if (emptyNote is not null)
        {
            var note = plot.Add.Annotation(emptyNote, Alignment.MiddleCenter);
            note.LabelFontSize = 14;
            note.LabelFontColor = Grey;
            note.LabelBackgroundColor = Colors.White;
            note.LabelBorderColor = LightGrey;
            note.LabelShadowColor = Colors.Transparent;
        }

        if (legend.Count > 0)
        {
            plot.Legend.ManualItems.AddRange(legend);
            plot.Legend.FontSize = 11;
            plot.Legend.FontName = FontName;
            plot.Legend.OutlineColor = LightGrey;
            plot.Legend.ShadowColor = Colors.Transparent;
            plot.Legend.BackgroundColor = new Color(255, 255, 255, 230);
            if (inside is { } where)
            {
                plot.Legend.Alignment = where;
                plot.ShowLegend();
            }
            else
            {
                // Below the data, in a row, so that it never hides a curve.
                plot.ShowLegend(Edge.Bottom);
            }
        }

        // After everything is added: the default font resolves to a serif one on some machines.
        plot.Font.Set(FontName);
    }

    /// <summary>A dashed line from a to b in data units (dash and gap of <paramref name="dash"/> each).</summary>
    private static void Dashes(Plot plot, Coordinates a, Coordinates b, double dash, Color colour, float width)
    {
        double length = Math.Sqrt(((b.X - a.X) * (b.X - a.X)) + ((b.Y - a.Y) * (b.Y - a.Y)));
        int n = Math.Max(1, (int)Math.Floor(length / (2 * dash)));
        for (int i = 0; i < n; i++)
        {
            double f0 = (double)i / n, f1 = (i + 0.5) / n;
            var d = plot.Add.Line(a.X + (f0 * (b.X - a.X)), a.Y + (f0 * (b.Y - a.Y)), a.X + (f1 * (b.X - a.X)), a.Y + (f1 * (b.Y - a.Y)));
            d.LineColor = colour;
            d.LineWidth = width;
            d.MarkerShape = MarkerShape.None;
        }
    }

    /// <summary>A dashed horizontal line across the unit's time span.</summary>
    private static void TimeDashes(Plot plot, UnitReport u, double y, Color colour, float width)
    {
        if (u.From is not { } from || u.To is not { } to || to <= from || !double.IsFinite(y))
        {
            return;
        }

        double x0 = X(from), x1 = X(to);
        int n = 90;
        for (int i = 0; i < n; i++)
        {
            var d = plot.Add.Line(x0 + (i * (x1 - x0) / n), y, x0 + ((i + 0.55) * (x1 - x0) / n), y);
            d.LineColor = colour;
            d.LineWidth = width;
            d.MarkerShape = MarkerShape.None;
        }
    }

    private static LegendItem LineItem(string label, Color colour, MarkerShape marker, bool line = true, float width = 1.5f) => new()
    {
        LabelText = label,
        LabelFontName = FontName,
        LineColor = line ? colour : Colors.Transparent,
        LineWidth = line ? width : 0,
        MarkerShape = marker,
        MarkerSize = marker == MarkerShape.None ? 0 : 7,
        MarkerColor = colour,
    };

    private static void Label(Plot plot, string text, Coordinates at, Alignment alignment, float dx, float dy, float size = 13)
    {
        var label = plot.Add.Text(text, at);
        label.Alignment = alignment;
        label.OffsetX = dx;
        label.OffsetY = dy;
        label.LabelFontSize = size;
        label.LabelFontColor = Ink;
    }

    private static MarkerShape SeverityMarker(AlertSeverity s) => s switch
    {
        AlertSeverity.High => MarkerShape.FilledSquare,
        AlertSeverity.Medium => MarkerShape.FilledTriangleUp,
        _ => MarkerShape.FilledCircle,
    };

    private static (MarkerShape Shape, string Kind) StreamMarker(string stream) => stream switch
    {
        "feed" => (MarkerShape.FilledSquare, "feed"),
        "solvent" => (MarkerShape.FilledDiamond, "solvent"),
        _ when stream.StartsWith("raffinate", StringComparison.Ordinal) => (MarkerShape.OpenCircle, "raffinates (reconciled)"),
        _ when stream.StartsWith("extract", StringComparison.Ordinal) => (MarkerShape.FilledCircle, "extracts (reconciled)"),
        _ => (MarkerShape.Cross, "other streams"),
    };

    private static bool TryComposition(TernarySystem system, StreamRecord s, out Ternary x)
    {
        x = default;
        if (!s.Fractions.TryGetValue(system.Solute.Id, out EstimatedValue a) || !s.Fractions.TryGetValue(system.Diluent.Id, out EstimatedValue b)
            || !s.Fractions.TryGetValue(system.Solvent.Id, out EstimatedValue c))
        {
            return false;
        }

        var raw = new Ternary(Math.Max(0, a.Value), Math.Max(0, b.Value), Math.Max(0, c.Value));
        if (!(raw.Sum > 0) || !double.IsFinite(raw.Sum))
        {
            return false;
        }

        x = raw.Normalized();
        return true;
    }

    private static string Basis(UnitDescription unit) => unit.System.Basis == CompositionBasis.Mass ? "mass" : "mole";

    private static double X(DateTimeOffset t) => t.UtcDateTime.ToOADate();
}

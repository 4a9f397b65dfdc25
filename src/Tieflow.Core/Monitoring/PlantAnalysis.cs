using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// The analysis of every unit of a plant: routes each reading to the <see cref="UnitAnalyzer"/> of the unit that owns
/// its tag and each lab result to the unit it belongs to, keeps count of tags no unit has, and turns the data source's
/// gaps into <c>source-gap</c> alerts. The same object serves replay (recorded history) and live operation; pure and
/// deterministic like the analyzers it holds (time comes from the data).
/// </summary>
public sealed class PlantAnalysis
{
    /// <summary>Alert kind of a gap in the data source (beyond the analysis kinds): raised while the source is lost.</summary>
    public const string SourceGapKind = "source-gap";

    private readonly Dictionary<string, UnitAnalyzer> _byTag = new(StringComparer.Ordinal);
    private readonly List<UnitAnalyzer> _analyzers = [];
    private readonly Dictionary<string, long> _unknown = new(StringComparer.Ordinal);
    private readonly TagLookup<UnitAnalyzer> _analyzerOf;
    private DateTimeOffset? _gapSince;
    private string? _gapReason;

    /// <summary>Creates the analysis of every unit of <paramref name="plant"/>.</summary>
    /// <param name="plant">The plant.</param>
    /// <param name="settings">Analysis settings before each unit's overrides; defaults when null.</param>
    /// <exception cref="ArgumentNullException"><paramref name="plant"/> is null.</exception>
    public PlantAnalysis(PlantDescription plant, AnalysisSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(plant);
        Plant = plant;
        foreach (UnitDescription u in plant.Units)
        {
            var a = new UnitAnalyzer(u, settings);
            _analyzers.Add(a);
            foreach (Instrument i in u.Instruments)
            {
                _byTag[i.Tag] = a;
            }
        }

        _analyzerOf = new TagLookup<UnitAnalyzer>(_byTag);
    }

    /// <summary>The plant analysed.</summary>
    public PlantDescription Plant { get; }

    /// <summary>The analysis of each unit, in plant order.</summary>
    public IReadOnlyList<UnitAnalyzer> Units => _analyzers;

    /// <summary>Readings whose tag no unit has, counted by tag.</summary>
    public IReadOnlyDictionary<string, long> UnknownTags => _unknown;

    /// <summary>The latest data time seen (readings, lab reports, source changes), or null before any.</summary>
    public DateTimeOffset? LastTime { get; private set; }

    /// <summary>Readings routed to a unit.</summary>
    public long Samples { get; private set; }

    /// <summary>True while a source gap is open (between <see cref="SourceLost"/> and <see cref="SourceResumed"/>).</summary>
    public bool InGap => _gapSince is not null;

    /// <summary>Adds one reading to the unit that owns its tag (counts it as unknown otherwise).</summary>
    /// <param name="sample">The reading, in time order give or take a few seconds.</param>
    /// <param name="output">Receives the records produced.</param>
    public void Add(in SignalSample sample, List<MonitorRecord> output)
    {
        Note(sample.Time);
        if (_analyzerOf.TryGetValue(sample.Tag, out UnitAnalyzer? analyzer))
        {
            Samples++;
            analyzer.Add(sample, output);
        }
        else
        {
            _unknown[sample.Tag] = _unknown.TryGetValue(sample.Tag, out long n) ? n + 1 : 1;
        }
    }

    /// <summary>Adds a lab result (at its reported time, never before) to the unit it belongs to.</summary>
    /// <param name="lab">The result. A stream written <c>UNIT/stream</c> names its unit; otherwise the units whose
    /// system has the component take it.</param>
    /// <param name="output">Receives the records produced.</param>
    public void AddLab(LabResult lab, List<MonitorRecord> output)
    {
        ArgumentNullException.ThrowIfNull(lab);
        Note(lab.Reported);
        foreach (UnitAnalyzer a in AnalyzersFor(lab))
        {
            a.AddLab(lab, output);
        }
    }

    /// <summary>Closes every window of every unit that is complete by a data time.</summary>
    /// <param name="now">The data time reached.</param>
    /// <param name="output">Receives the records produced.</param>
    public void Advance(DateTimeOffset now, List<MonitorRecord> output)
    {
        Note(now);
        foreach (UnitAnalyzer a in _analyzers)
        {
            a.Advance(now, output);
        }
    }

    /// <summary>The data source was lost at <paramref name="time"/>: raises a <c>source-gap</c> alert on every unit (once per gap).</summary>
    /// <param name="time">When it was lost (the source's clock).</param>
    /// <param name="reason">Why, in a few words.</param>
    /// <param name="output">Receives the alert records.</param>
    public void SourceLost(DateTimeOffset time, string reason, List<MonitorRecord> output)
    {
        ArgumentNullException.ThrowIfNull(output);
        if (_gapSince is not null)
        {
            return;
        }

        Note(time);
        _gapSince = time;
        _gapReason = reason;
        foreach (UnitAnalyzer a in _analyzers)
        {
            output.Add(new AlertRecord(a.Model.Unit.Id, time, SourceGapKind, AlertSeverity.Medium, null, null, true,
                $"the data source is lost ({reason}); no readings arrive, so windows in the gap are incomplete", new Dictionary<string, double>()));
        }
    }

    /// <summary>The data source delivers again: clears the open <c>source-gap</c> alert, stating the gap's length.</summary>
    /// <param name="time">When it resumed (the source's clock).</param>
    /// <param name="output">Receives the alert records.</param>
    public void SourceResumed(DateTimeOffset time, List<MonitorRecord> output)
    {
        ArgumentNullException.ThrowIfNull(output);
        if (_gapSince is not DateTimeOffset since)
        {
            return;
        }

        Note(time);
        TimeSpan gap = time - since;
        _gapSince = null;
        foreach (UnitAnalyzer a in _analyzers)
        {
            output.Add(new AlertRecord(a.Model.Unit.Id, time, SourceGapKind, AlertSeverity.Medium, null, null, false,
                $"cleared: the data source is back after a gap of {gap:c} ({_gapReason})", new Dictionary<string, double> { ["gapSeconds"] = gap.TotalSeconds }));
        }
    }

    /// <summary>What the analysis of each unit has seen so far, in plant order.</summary>
    public IReadOnlyList<UnitSummary> Summaries() => [.. _analyzers.Select(a => a.Summary())];

    private void Note(DateTimeOffset time)
    {
        if (LastTime is null || time > LastTime.Value)
        {
            LastTime = time;
        }
    }

    private IEnumerable<UnitAnalyzer> AnalyzersFor(LabResult lab)
    {
        int slash = lab.Stream.IndexOf('/', StringComparison.Ordinal);
        if (slash > 0)
        {
            string unit = lab.Stream[..slash];
            return _analyzers.Where(a => a.Model.Unit.Id == unit);
        }

        // Without a unit prefix a lab result belongs to the unit whose system has the component.
        return _analyzers.Where(a => a.Model.ComponentIds.Contains(lab.Component));
    }
}

using Tieflow.Core.Chemistry;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Service.Replay;

namespace Tieflow.Service.Report;

/// <summary>
/// Collects from a replay's record stream (and the online analyzers' readings) what the report shows, with memory
/// bounded however long the history: time series are decimated to a fixed number of points, alerts are kept up to a
/// cap, and of the reconciled streams only the last steady window's.
/// </summary>
internal sealed class ReportCollector
{
    private readonly Dictionary<string, UnitReport> _units = new(StringComparer.Ordinal);
    private readonly Dictionary<string, (UnitReport Unit, Instrument Instrument)> _analyzers = new(StringComparer.Ordinal);
    private readonly PlantDescription _plant;

    public ReportCollector(PlantDescription plant, ReportLimits? limits = null, TimeSpan? window = null)
    {
        ArgumentNullException.ThrowIfNull(plant);
        _plant = plant;
        Limits = limits ?? new ReportLimits();
        TimeSpan width = window ?? new AnalysisSettings().WindowLength;
        foreach (UnitDescription u in plant.Units)
        {
            var report = new UnitReport(u, Limits, width);
            _units[u.Id] = report;
            foreach (Instrument i in u.Instruments)
            {
                if (i.Quantity == InstrumentQuantity.Fraction && i.Component == ComponentRole.Solute && i.Stream == u.FinalRaffinate)
                {
                    _analyzers[i.Tag] = (report, i);
                    report.AddAnalyzer(i.Tag);
                }
            }
        }
    }

    public ReportLimits Limits { get; }

    /// <summary>The units in the plant file's order.</summary>
    public IReadOnlyList<UnitReport> Units => [.. _plant.Units.Select(u => _units[u.Id])];

    /// <summary>The history rows, passed through unchanged; the final raffinate analyzers' readings are kept for the report.</summary>
    public IEnumerable<SignalSample> Tap(IEnumerable<SignalSample> history)
    {
        ArgumentNullException.ThrowIfNull(history);
        foreach (SignalSample s in history)
        {
            AddSample(s);
            yield return s;
        }
    }

    /// <summary>Keeps a reading when it is one of a final raffinate analyzer (good or uncertain quality).</summary>
    public void AddSample(in SignalSample sample)
    {
        if (sample.Quality != SignalQuality.Bad && _analyzers.TryGetValue(sample.Tag, out var a))
        {
            // An analyzer's value describes the process its dead time earlier: plotted at that time, as the analysis aligns it.
            DateTimeOffset at = a.Instrument.DeadTime is { } dead ? sample.Time - dead : sample.Time;
            a.Unit.AddAnalyzerReading(sample.Tag, at, a.Instrument.Unit.ToBase(sample.Value));
        }
    }

    /// <summary>Takes one batch of records from the analysis.</summary>
    public void Add(IReadOnlyList<MonitorRecord> batch)
    {
        ArgumentNullException.ThrowIfNull(batch);
        foreach (MonitorRecord r in batch)
        {
            if (_units.TryGetValue(r.Unit, out UnitReport? u))
            {
                u.Add(r);
            }
        }
    }

    /// <summary>Adds what only the end of the replay knows: the summaries, lab comparisons and evaluations.</summary>
    public void Complete(ReplayResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        foreach ((UnitDescription unit, UnitSummary summary, EvaluationResult? evaluation) in result.Units)
        {
            if (_units.TryGetValue(unit.Id, out UnitReport? u))
            {
                u.Complete(summary, evaluation);
            }
        }
    }
}

using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;

namespace Tieflow.Service.Report;

/// <summary>What the report shows of one unit.</summary>
internal sealed class UnitReport
{
    private readonly Dictionary<int, DecimatedSeries> _efficiency = [];
    private readonly Dictionary<int, DecimatedSeries> _entrainment = [];
    private readonly Dictionary<string, DecimatedSeries> _analyzerSeries = new(StringComparer.Ordinal);
    private readonly Dictionary<AlertKey, ReportAlert> _open = [];
    private readonly LinkedList<ReportAlert> _alerts = new();
    private readonly List<StreamRecord> _windowStreams = [];
    private readonly Dictionary<int, double> _windowTemperatures = [];
    private readonly ReportLimits _limits;
    private DateTimeOffset _windowTime = DateTimeOffset.MinValue;

    public UnitReport(UnitDescription unit, ReportLimits limits, TimeSpan window)
    {
        Unit = unit;
        _limits = limits;
        Window = window;
        SoftSensor = new DecimatedSeries(limits.PointsPerSeries, window);
        SolventDissolved = new DecimatedSeries(limits.PointsPerSeries, window);
        SolventUnaccounted = new DecimatedSeries(limits.PointsPerSeries, window);
        GlobalTestRatio = new DecimatedSeries(limits.PointsPerSeries, window);
        for (int k = 1; k <= unit.Stages; k++)
        {
            _efficiency[k] = new DecimatedSeries(limits.PointsPerSeries, window);
            _entrainment[k] = new DecimatedSeries(limits.PointsPerSeries, window);
        }
    }

    public UnitDescription Unit { get; }

    public TimeSpan Window { get; }

    /// <summary>How much of the history is kept.</summary>
    public ReportLimits Limits => _limits;

    /// <summary>Stage efficiency (Murphree, raffinate) with its sigma, per stage, steady windows only.</summary>
    public IReadOnlyDictionary<int, DecimatedSeries> Efficiency => _efficiency;

    /// <summary>Carried-over fraction per stage, where measurable.</summary>
    public IReadOnlyDictionary<int, DecimatedSeries> Entrainment => _entrainment;

    /// <summary>The final raffinate solute soft sensor with its sigma.</summary>
    public DecimatedSeries SoftSensor { get; }

    /// <summary>Readings of the final raffinate solute analyzers (fraction), at the process time they describe.</summary>
    public IReadOnlyDictionary<string, DecimatedSeries> Analyzers => _analyzerSeries;

    /// <summary>Solvent leaving dissolved in the raffinate (kg/h or kmol/h).</summary>
    public DecimatedSeries SolventDissolved { get; }

    /// <summary>Solvent the balance does not account for (kg/h or kmol/h).</summary>
    public DecimatedSeries SolventUnaccounted { get; }

    /// <summary>The reconciliation's global test over its critical value (above one: the measurements do not fit the balances).</summary>
    public DecimatedSeries GlobalTestRatio { get; }

    /// <summary>Windows with a unit record; of them steady; and those whose global test failed.</summary>
    public (int Windows, int Steady, int GlobalTestFailed) Counts { get; private set; }

    /// <summary>The latest alert episodes (at most the cap), oldest first.</summary>
    public IReadOnlyList<ReportAlert> Alerts => [.. _alerts];

    /// <summary>Alert episodes dropped because of the cap (the oldest).</summary>
    public int AlertsOmitted { get; private set; }

    /// <summary>The reconciled streams of the last steady window, its time and its mean stage temperature (kelvin, or null).</summary>
    public (DateTimeOffset Time, IReadOnlyList<StreamRecord> Streams, double? TemperatureKelvin)? LastSteady { get; private set; }

    public UnitSummary? Summary { get; private set; }

    public EvaluationResult? Evaluation { get; private set; }

    public DateTimeOffset? From { get; private set; }

    public DateTimeOffset? To { get; private set; }

    internal void AddAnalyzer(string tag) => _analyzerSeries[tag] = new DecimatedSeries(_limits.PointsPerSeries, Window);

    internal void AddAnalyzerReading(string tag, DateTimeOffset time, double value) => _analyzerSeries[tag].Add(time, value);

    internal void Add(MonitorRecord record)
    {
        From = From is { } f && f <= record.Time ? f : record.Time;
        To = To is { } t && t >= record.Time ? t : record.Time;
        switch (record)
        {
            case StreamRecord s:
                StartWindow(s.Time);
                _windowStreams.Add(s);
                break;
            case StageRecord st:
                StartWindow(st.Time);
                if (st.Efficiency is { } e && _efficiency.TryGetValue(st.Stage, out DecimatedSeries? es))
                {
                    es.Add(st.Time, e.Value, e.Sigma);
                }

                if (st.Entrainment is double en && _entrainment.TryGetValue(st.Stage, out DecimatedSeries? ens))
                {
                    ens.Add(st.Time, en);
                }

                if (st.TemperatureKelvin is double tk)
                {
                    _windowTemperatures[st.Stage] = tk;
                }

                break;
            case UnitRecord u:
                Counts = (Counts.Windows + 1, Counts.Steady + (u.Steady ? 1 : 0), Counts.GlobalTestFailed + (u.GlobalTest > u.GlobalTestCritical ? 1 : 0));
                if (u.GlobalTestCritical > 0)
                {
                    GlobalTestRatio.Add(u.Time, u.GlobalTest / u.GlobalTestCritical);
                }

                SolventDissolved.Add(u.Time, u.SolventLossDissolved);
                SolventUnaccounted.Add(u.Time, u.SolventLossUnaccounted);
                if (u.Steady && u.Time == _windowTime && _windowStreams.Count > 0)
                {
                    double? temperature = _windowTemperatures.Count > 0 ? _windowTemperatures.Values.Average() : null;
                    LastSteady = (u.Time, [.. _windowStreams], temperature);
                }

                break;
            case SoftSensorRecord ss:
                SoftSensor.Add(ss.Time, ss.Value, ss.Sigma);
                break;
            case AlertRecord a:
                AddAlert(a);
                break;
        }
    }

    internal void Complete(UnitSummary summary, EvaluationResult? evaluation)
    {
        Summary = summary;
        Evaluation = evaluation;
        From = summary.From ?? From;
        To = summary.To ?? To;
    }

    private void StartWindow(DateTimeOffset time)
    {
        if (time != _windowTime)
        {
            _windowTime = time;
            _windowStreams.Clear();
            _windowTemperatures.Clear();
        }
    }

    private void AddAlert(AlertRecord a)
    {
        var key = new AlertKey(a.Kind, a.Stage, a.Tag);
        if (a.Active)
        {
            if (_open.ContainsKey(key))
            {
                return;
            }

            var alert = new ReportAlert(key, a.Severity, a.Time, null, a.Message, a.Evidence);
            _open[key] = alert;
            _alerts.AddLast(alert);
            if (_alerts.Count > _limits.Alerts)
            {
                ReportAlert oldest = _alerts.First!.Value;
                _alerts.RemoveFirst();
                if (_open.TryGetValue(oldest.Key, out ReportAlert? o) && ReferenceEquals(o, oldest))
                {
                    _open.Remove(oldest.Key);
                }

                AlertsOmitted++;
            }

            return;
        }

        if (_open.Remove(key, out ReportAlert? raised))
        {
            LinkedListNode<ReportAlert>? node = _alerts.FindLast(raised);
            if (node is not null)
            {
                node.Value = raised with { Cleared = a.Time };
            }
        }
    }
}

using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Monitoring.Efficiency;
using Tieflow.Core.Monitoring.Envelope;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Monitoring.Signals;
using Tieflow.Core.Numerics;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// The per-unit analysis: time-stamped readings and lab results in, records out. Pure and deterministic: time comes from
/// the data, and a history cut at time t gives the same records up to t. Steps per window: signal checks per tag; time
/// alignment (an analyzer's value describes the process its dead time earlier, and only new values count); balance
/// windows aligned to absolute time, closed once the slowest analyzer's values for them have arrived; the steady-state
/// gate (Cao-Rhinehart on minute means of the key flows and on the final raffinate analyzer); entrainment by the lever
/// rule; reconciliation with the phase envelope; stage efficiencies with their sigma, or one efficiency shared by the
/// stages that cannot be observed, fitted to the terminal streams; solvent accounting; the raffinate soft sensor with its
/// lab bias; alerts.
/// </summary>
public sealed class UnitAnalyzer
{
    private const double SecondsPerHour = 3600;

    // Window means in the line that gives each stage's raffinate trend (two hours of 30-minute windows).
    private const int TrendPoints = 4;

    // Window means in the line whose slope gives the hold-ups' accumulation: longer than the gate's, for a quieter slope.
    private const int AccumulationTrendPoints = 8;

    // A trend larger than this many of its sigmas means the hold-ups still accumulate.
    private const double TrendSigmas = 3;
    private readonly UnitModel _model;
    private readonly UnitDescription _unit;
    private readonly AnalysisSettings _settings;
    private readonly WindowReconciler _reconciler;
    private readonly Dictionary<string, SignalChecker> _checkers = new(StringComparer.Ordinal);
    private readonly SortedDictionary<long, Dictionary<string, TagWindow>> _windows = [];
    private readonly Dictionary<long, Dictionary<string, SignalProblem>> _windowProblems = [];
    private readonly Dictionary<string, CaoRhinehartFilter> _steadyFilters = new(StringComparer.Ordinal);
    private readonly Dictionary<string, (long Minute, double Sum, int Count)> _minuteMeans = new(StringComparer.Ordinal);
    private readonly Dictionary<string, TagSlot> _slots = new(StringComparer.Ordinal);
    private readonly AlertBook _alerts;
    private readonly Dictionary<string, WindowMeasurement> _previousMeans = new(StringComparer.Ordinal);
    private readonly RaffinateTrend _trend;
    private readonly RaffinateTrend _accumulationTrend;
    private readonly DynamicEfficiencyTracker? _tracker;
    private readonly SolventOnsetTest _solventOnset = new();
    private readonly string? _solventMeter;
    private SolventOnsetVerdict? _solventMeterBias;
    private readonly TimeSpan _lag;
    private readonly double[] _baseline;
    private readonly double[] _baselineVariance;
    private readonly int[] _baselineCount;
    private readonly double[] _cusum;
    private readonly double[] _lastEfficiency;
    private readonly double[] _lastSigma;
    private readonly double[] _sumEfficiency;
    private readonly int[] _countEfficiency;
    private readonly Dictionary<string, int> _suspectRuns = new(StringComparer.Ordinal);

    // Per tag left out of the balances, the consecutive steady windows in which its own test passed.
    private readonly Dictionary<string, int> _clearRuns = new(StringComparer.Ordinal);
    private readonly List<(DateTimeOffset Start, DateTimeOffset End, double Value, double Sigma)> _predictions = [];
    private readonly List<LabComparison> _labComparisons = [];
    private readonly List<(DateTimeOffset Time, double Value)> _softTrace = [];
    private readonly List<EfficiencyPoint> _efficiencyTrace = [];
    private readonly string _soluteId;
    private readonly string _softSensorName;
    private double _labBias;
    private double _labBiasVariance;
    private double _solventBaseline;
    private int _solventBaselineCount;
    private double _softLast = double.NaN;
    private double _softLagged = double.NaN;

    // The soft sensor's last cascades (see SoftSensor): the central one, and per stage the one with its efficiency
    // raised, with the step it was raised by (0 where none was solved).
    private CascadeResult? _softCentral;
    private CascadeResult?[] _softRaised = [];
    private double[] _softRaisedBy = [];
    private (double Efficiency, double Sigma, double TheoreticalStages, double? Hets) _overall = (double.NaN, double.NaN, double.NaN, null);
    private DateTimeOffset? _first;
    private DateTimeOffset? _last;
    private long _samples;
    private int _windowCount;
    private int _reconciledCount;
    private int _steadyCount;
    private long _closedThrough = long.MinValue;
    private int _failures;
    private string? _lastFailure;

    /// <summary>The settings in force (defaults with the plant file's overrides).</summary>
    public AnalysisSettings Settings => _settings;

    /// <summary>Creates the analysis of one unit.</summary>
    /// <param name="unit">The unit.</param>
    /// <param name="settings">Settings before the plant file's overrides; defaults when null.</param>
    public UnitAnalyzer(UnitDescription unit, AnalysisSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(unit);
        _unit = unit;
        _settings = (settings ?? new AnalysisSettings()).WithOverrides(unit.AlertOverrides);
        _model = new UnitModel(unit);
        _reconciler = new WindowReconciler(_model, new WindowReconcilerSettings { NotDeterminableSigma = _settings.NotDeterminableSigma });
        _alerts = new AlertBook(unit.Id, _settings);
        _soluteId = _model.ComponentIds[0];
        _softSensorName = $"raffinate-{_soluteId}";
        foreach (Instrument i in unit.Instruments)
        {
            _checkers[i.Tag] = new SignalChecker(i);
        }

        TimeSpan lag = TimeSpan.Zero;
        foreach (Instrument i in unit.Instruments)
        {
            if (i.DeadTime is { } d && d > lag)
            {
                lag = d;
            }
        }

        _lag = lag + TimeSpan.FromSeconds(1);
        int n = unit.Stages;
        _baseline = new double[n];
        _baselineVariance = new double[n];
        _baselineCount = new int[n];
        _cusum = new double[n];
        _lastEfficiency = [.. unit.Nominal.Efficiencies];
        _lastSigma = new double[n];
        _sumEfficiency = new double[n];
        _countEfficiency = new int[n];
        _trend = new RaffinateTrend(n, TrendPoints);
        _accumulationTrend = new RaffinateTrend(n, AccumulationTrendPoints);

        _solventMeter = _model.Bindings.FirstOrDefault(b => b.Key == QuantityKey.FlowOf(_model.StreamId(UnitStream.Solvent)))?.Instrument.Tag;

        // Between steady windows the dynamic model follows the efficiencies: per stage for a mixer-settler train, whose
        // stages have streams of their own to measure; one shared efficiency for a column's theoretical stages.
        _tracker = _settings.DynamicFitWindows > 0
            ? new DynamicEfficiencyTracker(unit, _settings.WindowLength, _settings.DynamicFitWindows, _settings.DynamicModelSigma, shared: unit.Kind == UnitKind.Column)
            : null;
        foreach (string tag in KeyTags())
        {
            _steadyFilters[tag] = new CaoRhinehartFilter();
        }

        foreach (Instrument i in unit.Instruments)
        {
            _slots[i.Tag] = new TagSlot(_checkers[i.Tag], _model.Binding(i.Tag)!, _steadyFilters.ContainsKey(i.Tag));
        }
    }

    /// <summary>The unit model (network and bindings).</summary>
    public UnitModel Model => _model;

    /// <summary>The alert state.</summary>
    public AlertBook Alerts => _alerts;

    /// <summary>True when a tag belongs to this unit.</summary>
    /// <param name="tag">The tag.</param>
    public bool Owns(string tag) => _checkers.ContainsKey(tag);

    /// <summary>Adds one reading (in time order, give or take a few seconds); closes the windows that are complete.</summary>
    /// <param name="sample">The reading.</param>
    /// <param name="output">Receives the records produced.</param>
    public void Add(in SignalSample sample, List<MonitorRecord> output)
    {
        if (!_slots.TryGetValue(sample.Tag, out TagSlot? slot))
        {
            return;
        }

        _samples++;
        _first ??= sample.Time;
        if (_last is null || sample.Time > _last)
        {
            _last = sample.Time;
        }

        CloseWindows(sample.Time, output);
        TagCheckState state = slot.Checker.Check(sample);
        Instrument instrument = slot.Binding.Instrument;
        DateTimeOffset aligned = instrument.DeadTime is { } dead ? sample.Time - dead : sample.Time;
        long w = WindowIndex(aligned);
        if (state.IsUpdate && state.Problem is not (SignalProblem.None or SignalProblem.Spike) && w > _closedThrough)
        {
            if (!_windowProblems.TryGetValue(w, out Dictionary<string, SignalProblem>? set))
            {
                _windowProblems[w] = set = new Dictionary<string, SignalProblem>(StringComparer.Ordinal);
            }

            set[sample.Tag] = state.Problem;
        }

        if (!state.Used || w <= _closedThrough)
        {
            return;
        }

        double value = instrument.Unit.ToBase(sample.Value);
        TagWindow? tw = slot.Window == w ? slot.TagWindow : null;
        if (tw is null)
        {
            if (!_windows.TryGetValue(w, out Dictionary<string, TagWindow>? tags))
            {
                _windows[w] = tags = new Dictionary<string, TagWindow>(StringComparer.Ordinal);
            }

            if (!tags.TryGetValue(sample.Tag, out tw))
            {
                tags[sample.Tag] = tw = new TagWindow();
            }

            // A window's accumulator stays with it until the window closes, after which no reading enters it.
            slot.Window = w;
            slot.TagWindow = tw;
        }

        tw.Add(value);
        if (slot.Steady)
        {
            FeedSteadyFilter(sample.Tag, aligned, value, instrument.IsAnalyzer);
        }
    }

    /// <summary>Adds a lab result at its reported time (it is never used before).</summary>
    /// <param name="lab">The result.</param>
    /// <param name="output">Receives the records produced.</param>
    public void AddLab(LabResult lab, List<MonitorRecord> output)
    {
        ArgumentNullException.ThrowIfNull(lab);
        ArgumentNullException.ThrowIfNull(output);
        CloseWindows(lab.Reported, output);
        string stream = lab.Stream.Contains('/', StringComparison.Ordinal) ? lab.Stream[(lab.Stream.IndexOf('/', StringComparison.Ordinal) + 1)..] : lab.Stream;
        if (!UnitStream.TryParse(stream, _unit.Stages, _unit.Arrangement, out UnitStream s, out _) || s != _unit.FinalRaffinate || lab.Component != _soluteId)
        {
            return;
        }

        int at = _predictions.FindIndex(p => p.Start <= lab.Sampled && lab.Sampled < p.End);
        if (at < 0)
        {
            return;
        }

        (_, _, double predicted, double sigma) = _predictions[at];
        double withBias = predicted + _labBias;
        double combined = Math.Sqrt((sigma * sigma) + (_settings.LabSigma * _settings.LabSigma) + _labBiasVariance);
        _labComparisons.Add(new LabComparison(lab.Sampled, lab.Reported, lab.Value, withBias, combined));
        double z = (lab.Value - withBias) / combined;
        bool mismatch = Math.Abs(z) > _settings.LabMismatchSigmas;
        var key = new AlertKey("lab-mismatch", null, null);
        var evidence = new Dictionary<string, double> { ["lab"] = lab.Value, ["softSensor"] = withBias, ["sigma"] = combined, ["z"] = z, ["threshold"] = _settings.LabMismatchSigmas };
        _alerts.Update(lab.Reported, key, mismatch, AlertSeverity.Low,
            $"lab result {lab.Value:G4} for the raffinate sampled {lab.Sampled:u} differs from the soft sensor {withBias:G4} by {Math.Abs(z):F1} sigma",
            evidence, output, TimeSpan.Zero);
        if (!mismatch)
        {
            // A result that agrees clears the alert at once; the off-delay is for conditions, not for single results.
            _alerts.Update(lab.Reported + _settings.OffDelay, key, false, AlertSeverity.Low, string.Empty, evidence, output);
        }

        // The bias is learned only now, at the report time (an EWMA of lab minus model with its variance).
        double difference = lab.Value - predicted;
        double weight = _settings.LabBiasWeight;
        double previous = _labBias;
        _labBias = ((1 - weight) * _labBias) + (weight * difference);
        _labBiasVariance = ((1 - weight) * _labBiasVariance) + (weight * (difference - previous) * (difference - _labBias));
        _labBiasVariance = Math.Max(_labBiasVariance, weight / (2 - weight) * _settings.LabSigma * _settings.LabSigma);
    }

    /// <summary>Closes every window complete by a data time (call at the end of a run with the last time).</summary>
    /// <param name="now">The data time reached.</param>
    /// <param name="output">Receives the records produced.</param>
    public void Advance(DateTimeOffset now, List<MonitorRecord> output) => CloseWindows(now, output);

    /// <summary>What the analysis has seen so far.</summary>
    public UnitSummary Summary() => new()
    {
        Unit = _unit.Id,
        From = _first,
        To = _last,
        Samples = _samples,
        Windows = _windowCount,
        Reconciled = _reconciledCount,
        Steady = _steadyCount,
        Failures = _failures,
        LastFailure = _lastFailure,
        Stages = [.. Enumerable.Range(0, _unit.Stages).Select(k => (k + 1, _countEfficiency[k] > 0 ? _sumEfficiency[k] / _countEfficiency[k] : double.NaN, _countEfficiency[k] > 0 ? _lastEfficiency[k] : double.NaN))],
        Overall = _overall,
        Alerts = _alerts.Episodes,
        SoftSensor = (_softSensorName, _softLast),
        LabComparisons = _labComparisons,
        SoftSensorTrace = _softTrace,
        EfficiencyTrace = _efficiencyTrace,
    };

    private long WindowIndex(DateTimeOffset t) => (long)Math.Floor((t - DateTimeOffset.UnixEpoch).Ticks / (double)_settings.WindowLength.Ticks);

    private DateTimeOffset WindowStart(long w) => DateTimeOffset.UnixEpoch + TimeSpan.FromTicks(w * _settings.WindowLength.Ticks);

    private IEnumerable<string> KeyTags()
    {
        foreach (Instrument i in _unit.Instruments)
        {
            if ((i.Quantity == InstrumentQuantity.Flow && i.Stream is { Phase: StreamPhase.Feed or StreamPhase.Solvent })
                || (i.Quantity == InstrumentQuantity.Fraction && i.Stream == _unit.FinalRaffinate && i.Component == ComponentRole.Solute))
            {
                yield return i.Tag;
            }
        }
    }

    private void FeedSteadyFilter(string tag, DateTimeOffset aligned, double value, bool analyzer)
    {
        if (!_steadyFilters.TryGetValue(tag, out CaoRhinehartFilter? filter))
        {
            return;
        }

        if (analyzer)
        {
            filter.Add(value);
            return;
        }

        long minute = (long)Math.Floor((aligned - DateTimeOffset.UnixEpoch).TotalMinutes);
        (long m, double sum, int count) = _minuteMeans.TryGetValue(tag, out var acc) ? acc : (minute, 0, 0);
        if (minute != m && count > 0)
        {
            filter.Add(sum / count);
            (m, sum, count) = (minute, 0, 0);
        }

        _minuteMeans[tag] = (m, sum + value, count + 1);
    }

    private void CloseWindows(DateTimeOffset now, List<MonitorRecord> output)
    {
        while (true)
        {
            long next = _closedThrough == long.MinValue ? (_windows.Count > 0 ? _windows.Keys.First() : long.MinValue) : _closedThrough + 1;
            if (next == long.MinValue)
            {
                return;
            }

            DateTimeOffset end = WindowStart(next + 1);
            if (now < end + _lag)
            {
                return;
            }

            _closedThrough = next;
            _windows.Remove(next, out Dictionary<string, TagWindow>? tags);
            _windowProblems.Remove(next, out Dictionary<string, SignalProblem>? problems);
            EvaluateWindow(next, tags ?? [], problems ?? new Dictionary<string, SignalProblem>(StringComparer.Ordinal), output);
        }
    }

    private void EvaluateWindow(long index, Dictionary<string, TagWindow> tags, Dictionary<string, SignalProblem> problems, List<MonitorRecord> output)
    {
        _windowCount++;
        DateTimeOffset start = WindowStart(index), end = WindowStart(index + 1);
        HashSet<string> problemTags = [];
        foreach ((string tag, SignalChecker checker) in _checkers)
        {
            SignalProblem now = checker.Advance(end + _lag);
            if (now != SignalProblem.None)
            {
                problems[tag] = now;
            }
        }

        problemTags.UnionWith(problems.Keys);

        // Signal quality, one alert per failed tag; a failed tag is left out of the window.
        foreach ((string tag, SignalChecker checker) in _checkers)
        {
            bool failed = problems.TryGetValue(tag, out SignalProblem problem);
            _alerts.Update(end, new AlertKey("signal-quality", null, tag), failed, AlertSeverity.Medium,
                failed ? checker.Describe(problem) : string.Empty,
                new Dictionary<string, double> { ["problem"] = (double)problem, ["windowSeconds"] = _settings.WindowLength.TotalSeconds }, output, TimeSpan.Zero);
        }

        var measurements = new List<WindowMeasurement>();
        var byTag = new Dictionary<string, WindowMeasurement>(StringComparer.Ordinal);
        double nIndependentMax = Math.Max(1, _settings.WindowLength.TotalSeconds / 10);
        foreach ((string tag, TagWindow tw) in tags)
        {
            InstrumentBinding b = _model.Binding(tag)!;
            if (tw.Count == 0 || problemTags.Contains(tag) || b.Key is not { } key)
            {
                continue;
            }

            // Readings of a continuous instrument closer than about 10 s are not independent on a real plant: the sigma
            // of the mean counts at most one independent reading per 10 s (a note of ours, common practice, no source).
            double n = b.Instrument.IsAnalyzer ? tw.Count : Math.Min(tw.Count, nIndependentMax);
            var m = new WindowMeasurement(tag, key, tw.Mean, b.Instrument.SigmaBase / Math.Sqrt(n), tw.Count);
            measurements.Add(m);
            byTag[tag] = m;
        }

        double temperature = StageTemperatures(tags, problemTags, out double?[] stageTemperatures);
        double centreHours = ((start - DateTimeOffset.UnixEpoch).TotalHours + (end - DateTimeOffset.UnixEpoch).TotalHours) / 2;
        (double Slope, double Sigma)?[] slopes = RaffinateSlopes(byTag, centreHours, out (double Slope, double Sigma)?[] accumulationSlopes);

        // The gate: steady flows and key compositions (Cao-Rhinehart), and settled analyzers (no step from the previous
        // window, no significant trend in any stage's raffinate over the last two hours).
        bool steady = _steadyFilters.Count > 0 && _steadyFilters.Values.All(f => f.IsSteady)
            && AnalyzersSettled(measurements) && slopes.All(t => t is not (double sl, double sg) || Math.Abs(sl) <= TrendSigmas * sg);
        if (steady)
        {
            _steadyCount++;
        }

        // Entrainment: streams measured in solute and in the other phase's main component.
        var entrained = new HashSet<string>(StringComparer.Ordinal);
        var entrainmentByStage = new double?[_unit.Stages];
        foreach ((UnitStream stream, WindowMeasurement soluteM, WindowMeasurement markerM) in TwoComponentStreams(byTag))
        {
            bool extract = stream.Phase == StreamPhase.Extract;
            EntrainmentEstimate e = EntrainmentEstimator.Estimate(_unit.Equilibrium, temperature, extract, soluteM.Value, soluteM.Sigma, markerM.Value, markerM.Sigma);
            int stage = stream.Stage == 0 ? 1 : stream.Stage;
            entrainmentByStage[stage - 1] = Math.Max(entrainmentByStage[stage - 1] ?? 0, e.Fraction);
            if (e.Detected)
            {
                entrained.Add(_model.StreamId(stream));
            }

            var key = new AlertKey("entrainment", stage, null);
            bool active = _alerts.IsActive(key);
            bool condition = e.Detected && e.Fraction > (active ? _settings.EntrainmentFraction - _settings.EntrainmentDeadband : _settings.EntrainmentFraction);
            _alerts.Update(end, key, condition, AlertSeverity.High,
                $"the {_unit.StreamName(stream)} of stage {stage} carries {100 * e.Fraction:F2} % of {(extract ? "raffinate" : "extract")} phase (lever rule, sigma {100 * e.Sigma:F2} %); set point {100 * _settings.EntrainmentFraction:F2} %",
                new Dictionary<string, double> { ["fraction"] = e.Fraction, ["sigma"] = e.Sigma, ["threshold"] = _settings.EntrainmentFraction, ["windowSeconds"] = _settings.WindowLength.TotalSeconds },
                output);
        }

        // Instruments already found suspect are left out of the balances (and of the dynamic fit) until the balances
        // agree with them again: a drifting analyzer would otherwise bias every estimate, and one window in which the
        // serial elimination named another instrument would be enough to clear it.
        HashSet<string> excluded = [.. _checkers.Keys.Where(t => _alerts.IsActive(new AlertKey("suspect-instrument", null, t)))];
        WindowReconciliation? rec = null;
        try
        {
            rec = measurements.Count > 0 ? _reconciler.Reconcile(measurements, temperature, entrained, accumulationSlopes, steady, excluded) : null;
        }
        catch (Exception e) when (e is ReconciliationException or EquilibriumException or ArgumentException)
        {
            // A window that cannot be reconciled gives no estimates; the failure is kept for the summary and the status.
            rec = null;
            _failures++;
            _lastFailure = $"{end:u}: {e.Message}";
        }

        if (rec is null)
        {
            for (int k = 0; k < _unit.Stages; k++)
            {
                output.Add(new StageRecord(_unit.Id, end, k + 1, null, entrainmentByStage[k], stageTemperatures[k]));
            }

            return;
        }

        _reconciledCount++;
        ReconciliationResult final = rec.Report.Final;
        WriteStreams(end, final, output);
        List<string> disputed = [.. rec.SuspectTags, .. rec.ExcludedTests.Select(t => t.Tag)];

        // Efficiencies: observed per stage, else one shared efficiency fitted to the terminal streams.
        var efficiencies = new EstimatedValue?[_unit.Stages];
        bool anyUnobserved = false;
        foreach (StageEfficiency e in rec.Efficiencies)
        {
            // A column's theoretical stages have no streams of their own to measure: it always gets one shared efficiency.
            if (_unit.Kind == UnitKind.Column)
            {
                anyUnobserved = true;
            }
            else if (e.Status == EfficiencyStatus.Determined && !StreamsDisputed(e.Stage, disputed))
            {
                efficiencies[e.Stage - 1] = new EstimatedValue(e.Value, e.Sigma);
            }
            else if (e.Status == EfficiencyStatus.NotObservable)
            {
                anyUnobserved = true;
            }
        }

        MaterialStream feed = StreamOf(final, "feed"), solvent = StreamOf(final, "solvent");
        double raffinateSolute = final.Fraction("raffinate", _soluteId).Value;
        double raffinateSigma = final.Fraction("raffinate", _soluteId).Sigma;
        if (anyUnobserved && steady)
        {
            FitSharedEfficiency(feed, solvent, raffinateSolute, raffinateSigma, temperature, efficiencies);
        }

        bool keyAnalyzerFailed = problemTags.Any(t => _model.Binding(t)!.Instrument.Quantity == InstrumentQuantity.Fraction);
        for (int k = 0; k < _unit.Stages; k++)
        {
            if (efficiencies[k] is { } est && steady)
            {
                _efficiencyTrace.Add(new EfficiencyPoint(end, k + 1, est.Value, est.Sigma, anyUnobserved && _overall.TheoreticalStages is double ts && double.IsFinite(ts) ? ts : null));
                _lastEfficiency[k] = est.Value;
                _lastSigma[k] = est.Sigma;
                _sumEfficiency[k] += est.Value;
                _countEfficiency[k]++;
            }

            output.Add(new StageRecord(_unit.Id, end, k + 1, steady ? efficiencies[k] : null, entrainmentByStage[k], stageTemperatures[k]));
        }

        TrackerWindow? trackerWindow = _tracker is null ? null : TrackerWindowOf(feed, solvent, temperature, excluded.Count == 0 ? byTag : byTag.Where(p => !excluded.Contains(p.Key)).ToDictionary(StringComparer.Ordinal));
        if (steady && trackerWindow is not null)
        {
            _tracker!.AddSteady(trackerWindow, ModelEfficiencies(null).Values);
        }

        SolventBalance balance = SolventAccounting(final, byTag, rec.TotalAccumulation(_model.ComponentIds[2]));
        (double dissolved, double unaccounted, double unaccountedSigma) = (balance.Dissolved, balance.Unaccounted, balance.Sigma);
        _solventOnset.Add(end, unaccounted, unaccountedSigma, balance.Meter, balance.MeterSigma, balance.ExtractSolvent, balance.ExtractSolventSigma);
        bool leaking = SolventBalanceOpen();
        bool analyzerSuspect = AnyAnalyzerSuspect();
        bool driftSuppressed = keyAnalyzerFailed || entrained.Count > 0 || leaking || analyzerSuspect;
        EstimatedValue?[]? current = null;
        if (!steady && trackerWindow is not null && _tracker!.Add(trackerWindow) is { } fit)
        {
            // Between steady windows the drift is judged on the dynamic model's fit over the last windows; the records
            // keep the steady windows' efficiencies only. The soft sensor and the spec-recovery advice use the fit too:
            // it is the unit's efficiency now, where the last steady window's may be hours old.
            UpdateDrift(end, fit.Efficiencies, shared: _unit.Kind == UnitKind.Column, driftSuppressed, output, dynamic: true);
            current = fit.Efficiencies;
        }

        if (steady)
        {
            UpdateSolventLoss(end, solvent.Flow, unaccounted, unaccountedSigma, output);

            // Consequential alerts are suppressed (ISA-18.2 design-based suppression): while a solvent loss is raised
            // (or the solvent meter is found biased by the onset of the open balance), the flow meters whose balance it
            // opens are not suspects and the efficiencies it biases do not drift. Likewise while an analyzer is a
            // suspect instrument: the balances every efficiency rests on carry its error.
            leaking = SolventBalanceOpen();
            UpdateSuspects(end, leaking ? [.. rec.SuspectTags.Where(t => _model.Binding(t)!.Instrument.Quantity != InstrumentQuantity.Flow)] : rec.SuspectTags, excluded, rec.ExcludedTests, output);
            analyzerSuspect = AnyAnalyzerSuspect();
            UpdateDrift(end, efficiencies, anyUnobserved, keyAnalyzerFailed || entrained.Count > 0 || leaking || analyzerSuspect, output);
        }

        (double[] modelEfficiencies, double[] modelSigmas) = ModelEfficiencies(current);
        (double steadyState, double softSigma) = SoftSensor(feed, solvent, temperature, steady, modelEfficiencies, modelSigmas);

        // The cascade model gives the raffinate the unit will settle at; the hold-ups make the real one follow it with
        // a lag. A first-order lag with the train's residence time (total hold-up over total throughput) stands in for
        // the composition dynamics (a modelling choice of ours: the dominant time constant of a counter-current train
        // is of the order of its residence time).
        double soft = steadyState;
        if (double.IsFinite(steadyState))
        {
            double throughput = MassFlow(feed) + MassFlow(solvent);
            double tau = throughput > 0 ? _unit.Stages * _unit.Holdup.TotalKg / throughput * SecondsPerHour : 0;
            if (double.IsFinite(_softLagged) && tau > 0)
            {
                double step = _settings.WindowLength.TotalSeconds;
                _softLagged += (1 - Math.Exp(-step / tau)) * (steadyState - _softLagged);
            }
            else
            {
                _softLagged = steadyState;
            }

            soft = _softLagged;
        }
        double? needed = null;
        if (double.IsFinite(soft) && soft + softSigma > _unit.RaffinateSoluteSpec)
        {
            needed = SolventToFeedNeeded(feed, solvent.Composition, temperature, modelEfficiencies);
        }

        output.Add(new UnitRecord(_unit.Id, end, final.GlobalTest.Statistic, final.GlobalTest.Critical, steady, dissolved, unaccounted, needed));
        if (double.IsFinite(soft))
        {
            _softLast = soft + _labBias;
            double sigma = Math.Sqrt((softSigma * softSigma) + _labBiasVariance);
            output.Add(new SoftSensorRecord(_unit.Id, end, _softSensorName, _softLast, sigma, _labBias));
            _predictions.Add((start, end, soft, softSigma));
            _softTrace.Add((end, _softLast));
            if (_predictions.Count > 400)
            {
                _predictions.RemoveRange(0, 100);
            }

            var key = new AlertKey("off-spec", null, null);
            bool active = _alerts.IsActive(key);
            double margin = (active ? _settings.OffSpecMargin - 1 : _settings.OffSpecMargin) * sigma;
            _alerts.Update(end, key, _softLast > _unit.RaffinateSoluteSpec + margin, AlertSeverity.High,
                $"the raffinate's {_soluteId} is {_softLast:G4} (soft sensor, sigma {sigma:G2}) against a spec of {_unit.RaffinateSoluteSpec:G4}"
                + (needed is double r ? $"; a solvent-to-feed ratio of about {r:G3} would bring it back at today's efficiencies (advisory)" : string.Empty),
                new Dictionary<string, double> { ["value"] = _softLast, ["sigma"] = sigma, ["spec"] = _unit.RaffinateSoluteSpec },
                output);
        }
    }

    /// <summary>
    /// True when the gross-error tests removed an analyzer of one of the stage's own streams (the raffinate entering and
    /// leaving it, the extract leaving it): its efficiency would come from values the balances had to infer, and the
    /// window says nothing reliable about that stage.
    /// </summary>
    private bool StreamsDisputed(int stage, IReadOnlyList<string> suspects)
    {
        UnitStream inlet = stage == 1 ? UnitStream.Feed : UnitStream.RaffinateOf(stage - 1);
        foreach (string tag in suspects)
        {
            Instrument i = _model.Binding(tag)!.Instrument;
            if (i.Quantity == InstrumentQuantity.Fraction && i.Stream is UnitStream s && (s == inlet || s == UnitStream.RaffinateOf(stage) || s == UnitStream.ExtractOf(stage)))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Per stage, the trend of the raffinate leaving it (null where its analyzer has no full history).</summary>
    private (double Slope, double Sigma)?[] RaffinateSlopes(Dictionary<string, WindowMeasurement> byTag, double centreHours, out (double Slope, double Sigma)?[] accumulationSlopes)
    {
        var slopes = new (double Slope, double Sigma)?[_unit.Stages];
        accumulationSlopes = new (double Slope, double Sigma)?[_unit.Stages];
        double span = (TrendPoints - 1 + 0.01) * _settings.WindowLength.TotalHours;
        double longSpan = (AccumulationTrendPoints - 1 + 0.01) * _settings.WindowLength.TotalHours;
        for (int k = 1; k <= _unit.Stages; k++)
        {
            WindowMeasurement? m = AnalyzerOf(UnitStream.RaffinateOf(k), byTag);
            if (m is null)
            {
                _trend.Forget(k);
                _accumulationTrend.Forget(k);
                continue;
            }

            _trend.Add(k, centreHours, m.Value, m.Sigma);
            slopes[k - 1] = _trend.Slope(k, centreHours, span);
            _accumulationTrend.Add(k, centreHours, m.Value, m.Sigma);
            accumulationSlopes[k - 1] = _accumulationTrend.Slope(k, centreHours, longSpan);
        }

        return slopes;
    }

    /// <summary>
    /// The second half of the steady-state gate: the hold-ups of a mixer-settler train settle over hours, slower than the
    /// Cao-Rhinehart filter on the key signals can see within one window, so every analyzer's window mean must also agree
    /// with its previous window's mean within 3 sigma of their difference. An efficiency computed while the stages still
    /// accumulate solute is biased.
    /// </summary>
    private bool AnalyzersSettled(List<WindowMeasurement> measurements)
    {
        bool settled = true;
        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (WindowMeasurement m in measurements)
        {
            if (!_model.Binding(m.Tag)!.Instrument.IsAnalyzer)
            {
                continue;
            }

            seen.Add(m.Tag);
            if (!_previousMeans.TryGetValue(m.Tag, out WindowMeasurement? p) || Math.Abs(m.Value - p.Value) > 3 * Math.Sqrt((m.Sigma * m.Sigma) + (p.Sigma * p.Sigma)))
            {
                settled = false;
            }

            _previousMeans[m.Tag] = m;
        }

        foreach (string tag in _previousMeans.Keys.Where(t => !seen.Contains(t)).ToList())
        {
            _previousMeans.Remove(tag);
        }

        return settled;
    }

    private double MassFlow(MaterialStream stream) =>
        _unit.System.Basis == CompositionBasis.Mass ? stream.Flow : stream.Flow * _unit.System.MeanMolarMass(stream.Composition);

    private double StageTemperatures(Dictionary<string, TagWindow> tags, HashSet<string> problemTags, out double?[] perStage)
    {
        perStage = new double?[_unit.Stages];
        double sum = 0;
        int count = 0;
        foreach (Instrument i in _unit.Instruments)
        {
            if (i.Quantity == InstrumentQuantity.Temperature && i.Stage is int s && !problemTags.Contains(i.Tag) && tags.TryGetValue(i.Tag, out TagWindow? tw) && tw.Count > 0)
            {
                perStage[s - 1] = tw.Mean;
                sum += tw.Mean;
                count++;
            }
        }

        double t = count > 0 ? sum / count : _unit.Nominal.TemperatureKelvin;
        return _unit.Equilibrium.ValidTemperatures.Contains(t) ? t : _unit.Nominal.TemperatureKelvin;
    }

    private IEnumerable<(UnitStream Stream, WindowMeasurement Solute, WindowMeasurement Marker)> TwoComponentStreams(Dictionary<string, WindowMeasurement> byTag)
    {
        foreach (UnitStream s in _model.Streams.Where(UnitModel.IsSaturatedPhase).Append(_unit.FinalExtract).Distinct())
        {
            if (s.Phase is not (StreamPhase.Raffinate or StreamPhase.Extract))
            {
                continue;
            }

            ComponentRole markerRole = s.Phase == StreamPhase.Extract ? ComponentRole.Diluent : ComponentRole.Solvent;
            WindowMeasurement? solute = null, marker = null;
            foreach (WindowMeasurement m in byTag.Values)
            {
                Instrument i = _model.Binding(m.Tag)!.Instrument;
                if (i.Quantity == InstrumentQuantity.Fraction && i.Stream == s)
                {
                    if (i.Component == ComponentRole.Solute)
                    {
                        solute = m;
                    }
                    else if (i.Component == markerRole)
                    {
                        marker = m;
                    }
                }
            }

            if (solute is not null && marker is not null)
            {
                yield return (s, solute, marker);
            }
        }
    }

    private void WriteStreams(DateTimeOffset end, ReconciliationResult final, List<MonitorRecord> output)
    {
        foreach (UnitStream s in _model.Streams)
        {
            string id = _model.StreamId(s);
            QuantityEstimate flow = final.Flow(id);
            if (!flow.HasValue)
            {
                continue;
            }

            var fractions = new Dictionary<string, EstimatedValue>(StringComparer.Ordinal);
            foreach (string c in _model.ComponentIds)
            {
                QuantityEstimate f = final.Fraction(id, c);
                if (f.HasValue)
                {
                    fractions[c] = new EstimatedValue(f.Value, f.Sigma);
                }
            }

            output.Add(new StreamRecord(_unit.Id, end, id, new EstimatedValue(flow.Value, flow.Sigma), fractions));
        }
    }

    private MaterialStream StreamOf(ReconciliationResult r, string id)
    {
        QuantityEstimate flow = r.Flow(id);
        Ternary nominal = id == "feed" ? _unit.Nominal.Feed.Composition : _unit.Nominal.Solvent.Composition;
        double Fraction(int i)
        {
            QuantityEstimate f = r.Fraction(id, _model.ComponentIds[i]);
            return f.HasValue ? Math.Clamp(f.Value, 0, 1) : nominal[i];
        }

        double flowValue = flow.HasValue ? Math.Max(flow.Value, 0) : (id == "feed" ? _unit.Nominal.Feed.Flow : _unit.Nominal.Solvent.Flow);
        return new MaterialStream(flowValue, new Ternary(Fraction(0), Fraction(1), Fraction(2)).Normalized());
    }

    private void FitSharedEfficiency(MaterialStream feed, MaterialStream solvent, double raffinateSolute, double raffinateSigma, double temperature, EstimatedValue?[] efficiencies)
    {
        var free = Enumerable.Range(0, _unit.Stages).Where(k => efficiencies[k] is null).ToArray();
        var solver = new CascadeSolver(_unit.Equilibrium, temperature);
        double[] eff = new double[_unit.Stages];
        CascadeResult? last = null;
        double Raffinate(double e)
        {
            for (int k = 0; k < _unit.Stages; k++)
            {
                eff[k] = Math.Clamp(efficiencies[k]?.Value ?? e, 0.02, 1);
            }

            // Every solve after the first starts from the profile of the one before (the bracket's ends, then Brent's
            // steps, which close in): the same answers within the solver's tolerance.
            last = solver.Solve(_unit.Arrangement, feed, solvent, eff, last);
            return last.Raffinate.Composition.Solute;
        }

        try
        {
            // The final raffinate falls as the shared efficiency rises: Brent's method on the bracket [0.02, 1].
            double lo = 0.02, hi = 1.0;
            double fLo = Raffinate(lo) - raffinateSolute, fHi = Raffinate(hi) - raffinateSolute;
            double e;
            if (fHi >= 0)
            {
                e = hi;
            }
            else if (fLo <= 0)
            {
                e = lo;
            }
            else if (!BracketedRoot.TryFind((x, target) => Raffinate(x) - target, raffinateSolute, lo, hi, fLo, fHi, 1e-9, 100, out e, out _))
            {
                return;
            }

            double h = 0.01;
            double slope = (Raffinate(Math.Min(1, e + h)) - Raffinate(Math.Max(0.02, e - h))) / (Math.Min(1, e + h) - Math.Max(0.02, e - h));
            double sigma = slope != 0 ? Math.Abs(raffinateSigma / slope) : double.PositiveInfinity;
            if (!double.IsFinite(sigma) || sigma > _settings.NotDeterminableSigma)
            {
                return;
            }

            foreach (int k in free)
            {
                efficiencies[k] = new EstimatedValue(e, sigma);
            }

            double theoretical = double.NaN;
            try
            {
                // The stages count for the raffinate the fitted efficiency gives, not for the reconciled raffinate
                // itself: near equilibrium stages the reconciled value's noise can fall below what any efficiency up to
                // 1 reaches, and the count of a lean raffinate is very sensitive to it (5 design stages read 5.6).
                var design = new CascadeDesign(_unit.Equilibrium, temperature);
                double modelled = Raffinate(e);
                if (modelled > 0 && modelled < feed.Composition.Solute)
                {
                    theoretical = design.FindFractionalStages(feed, solvent, DesignTarget.RaffinateFraction(modelled), [1.0]);
                }
            }
            catch (Exception ex) when (ex is InfeasibleSpecificationException or CascadeException or EquilibriumException or ArgumentException)
            {
                theoretical = double.NaN;
            }

            double? hets = _unit.ColumnHeightMetres is double height && double.IsFinite(theoretical) && theoretical > 0 ? height / theoretical : null;
            _overall = (e, sigma, theoretical, hets);
        }
        catch (Exception ex) when (ex is CascadeException or EquilibriumException or InfeasibleSpecificationException)
        {
            // No cascade through this window's streams: the unobserved stages keep no efficiency for it.
        }
    }

    private void UpdateDrift(DateTimeOffset end, EstimatedValue?[] efficiencies, bool shared, bool suppressed, List<MonitorRecord> output, bool dynamic = false)
    {
        for (int k = 0; k < _unit.Stages; k++)
        {
            if (efficiencies[k] is not { } e)
            {
                continue;
            }

            if (_baselineCount[k] < _settings.BaselineWindows)
            {
                if (dynamic)
                {
                    // The baseline is learnt from steady windows only.
                    continue;
                }


                // Learn the baseline (mean and variance of E across steady windows) before judging drift.
                _baselineCount[k]++;
                double delta = e.Value - _baseline[k];
                _baseline[k] += delta / _baselineCount[k];
                _baselineVariance[k] += delta * (e.Value - _baseline[k]);
                continue;
            }

            double spread = _baselineCount[k] > 1 ? _baselineVariance[k] / (_baselineCount[k] - 1) : 0;
            double model = _settings.EfficiencyModelSigma;
            double sigma = Math.Sqrt((e.Sigma * e.Sigma) + spread + (model * model));
            double z = (_baseline[k] - e.Value) / sigma;
            _cusum[k] = Math.Max(0, _cusum[k] + z - _settings.EfficiencyDriftDeadband);
            if (_cusum[k] > 10 * _settings.EfficiencyDriftSigmas)
            {
                _cusum[k] = 10 * _settings.EfficiencyDriftSigmas;
            }

            int? stage = shared ? null : k + 1;
            if (shared && k != Array.FindIndex(efficiencies, x => x is not null))
            {
                continue;
            }

            var key = new AlertKey("efficiency-drift", stage, null);
            bool condition = !suppressed && _cusum[k] > (_alerts.IsActive(key) ? _settings.EfficiencyDriftSigmas / 2 : _settings.EfficiencyDriftSigmas);
            _alerts.Update(end, key, condition, AlertSeverity.Medium,
                $"{(stage is int s ? $"stage {s}" : "the unit")} efficiency {e.Value:F3} (sigma {e.Sigma:F3}{(dynamic ? $", dynamic model fitted over the last {_settings.WindowLength.TotalHours * _settings.DynamicFitWindows:G3} h" : string.Empty)}) is below its baseline {_baseline[k]:F3} (CUSUM {_cusum[k]:F1} against {_settings.EfficiencyDriftSigmas:F1} sigma)",
                new Dictionary<string, double> { ["efficiency"] = e.Value, ["sigma"] = e.Sigma, ["baseline"] = _baseline[k], ["cusum"] = _cusum[k], ["threshold"] = _settings.EfficiencyDriftSigmas, ["dynamicFitHours"] = dynamic ? _settings.WindowLength.TotalHours * _settings.DynamicFitWindows : 0 },
                output);
        }
    }

    /// <summary>
    /// The suspect-instrument alerts of a steady window. A tag named by the serial elimination in
    /// <see cref="AnalysisSettings.SuspectWindows"/> consecutive steady windows is raised; from then on it is left out of
    /// the balances and judged by its own test against the estimate without it, and its alert clears once that test has
    /// passed in as many consecutive steady windows (then the off-delay). A window without the tag's reading holds it.
    /// </summary>
    private void UpdateSuspects(DateTimeOffset end, IReadOnlyList<string> suspects, IReadOnlySet<string> excluded, IReadOnlyList<ExcludedMeasurementTest> excludedTests, List<MonitorRecord> output)
    {
        foreach (string tag in _checkers.Keys)
        {
            if (tag != _solventMeter || _solventMeterBias is null)
            {
                if (excludedTests.FirstOrDefault(t => t.Tag == tag) is { Tag: not null } test)
                {
                    UpdateExcludedSuspect(end, test, output);
                    continue;
                }

                if (excluded.Contains(tag) && !suspects.Contains(tag))
                {
                    // Left out, but without a reading (or kept in for observability and not named): nothing new on it.
                    continue;
                }
            }

            _clearRuns[tag] = 0;
            bool named = suspects.Contains(tag);
            _suspectRuns[tag] = named ? (_suspectRuns.TryGetValue(tag, out int r) ? r + 1 : 1) : 0;
            var key = new AlertKey("suspect-instrument", null, tag);
            if (tag == _solventMeter && _solventMeterBias is { } bias)
            {
                string unit = _unit.System.FlowUnit;
                _alerts.Update(end, key, true, AlertSeverity.Medium,
                    $"{tag} reads about {bias.Size:F1} {unit} high: the solvent balance opened when its reading stepped up while the solvent leaving in the extract did not move (chi-square {bias.BiasChiSquare:F1} for a biased meter against {bias.LossChiSquare:F0} for a loss)",
                    new Dictionary<string, double> { ["step"] = bias.Size, ["biasChiSquare"] = bias.BiasChiSquare, ["lossChiSquare"] = bias.LossChiSquare },
                    output);
                continue;
            }

            bool condition = _suspectRuns[tag] >= _settings.SuspectWindows || (_alerts.IsActive(key) && named);
            _alerts.Update(end, key, condition, AlertSeverity.Medium,
                $"{tag} disagrees with the material balances: named by the gross-error tests in {_suspectRuns[tag]} consecutive steady windows",
                new Dictionary<string, double> { ["windows"] = _suspectRuns[tag], ["threshold"] = _settings.SuspectWindows },
                output);
        }
    }

    private void UpdateExcludedSuspect(DateTimeOffset end, ExcludedMeasurementTest test, List<MonitorRecord> output)
    {
        string tag = test.Tag;
        bool disagrees = test.Disagrees;
        _clearRuns[tag] = disagrees ? 0 : _clearRuns.GetValueOrDefault(tag) + 1;
        _suspectRuns[tag] = disagrees ? _suspectRuns.GetValueOrDefault(tag) + 1 : 0;
        var key = new AlertKey("suspect-instrument", null, tag);
        _alerts.Update(end, key, _clearRuns[tag] < _settings.SuspectWindows, AlertSeverity.Medium,
            $"{tag} is left out of the balances: its reading differs from their estimate without it by {test.Normalized:F1} sigma (critical {test.Critical:F2}); {_clearRuns[tag]} of {_settings.SuspectWindows} consecutive steady windows agree",
            new Dictionary<string, double>
            {
                ["z"] = test.Normalized,
                ["critical"] = test.Critical,
                ["measured"] = test.Measured,
                ["estimate"] = test.Estimate,
                ["sigma"] = test.Sigma,
                ["clearWindows"] = _clearRuns[tag],
                ["threshold"] = _settings.SuspectWindows,
            },
            output);
    }

    private SolventBalance SolventAccounting(ReconciliationResult final, Dictionary<string, WindowMeasurement> byTag, double holdupGain)
    {
        string solventId = _model.ComponentIds[2];
        QuantityEstimate rf = final.Flow("raffinate"), rs = final.Fraction("raffinate", solventId);
        double dissolved = rf.HasValue && rs.HasValue ? Math.Max(0, rf.Value * rs.Value) : double.NaN;

        // The unaccounted solvent comes from the measured flows (the reconciliation closes every balance by
        // construction): solvent in by the solvent meter, out in the extract and the raffinate, less what the stages'
        // hold-ups take up while the unit settles.
        double In(string stream, out double sigma)
        {
            sigma = double.NaN;
            foreach (WindowMeasurement m in byTag.Values)
            {
                if (m.Key == QuantityKey.FlowOf(stream))
                {
                    sigma = m.Sigma;
                    return m.Value;
                }
            }

            return double.NaN;
        }

        double solventFlow = In("solvent", out double sSolvent), extractFlow = In("extract", out double sExtract), raffinateFlow = In("raffinate", out double sRaffinate);
        QuantityEstimate es = final.Fraction("extract", solventId), fs = final.Fraction("solvent", solventId);
        if (!double.IsFinite(solventFlow) || !double.IsFinite(extractFlow) || !double.IsFinite(raffinateFlow) || !es.HasValue || !fs.HasValue || !rs.HasValue)
        {
            return new SolventBalance(dissolved, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);
        }

        double unaccounted = (solventFlow * fs.Value) - (extractFlow * es.Value) - (raffinateFlow * rs.Value) - holdupGain;
        double sigma = Math.Sqrt(Math.Pow(sSolvent * fs.Value, 2) + Math.Pow(sExtract * es.Value, 2) + Math.Pow(sRaffinate * rs.Value, 2));
        return new SolventBalance(dissolved, unaccounted, sigma, solventFlow * fs.Value, sSolvent * fs.Value, extractFlow * es.Value, sExtract * es.Value);
    }

    private void UpdateSolventLoss(DateTimeOffset end, double solventFlow, double unaccounted, double sigma, List<MonitorRecord> output)
    {
        if (!double.IsFinite(unaccounted))
        {
            return;
        }

        if (_solventBaselineCount < _settings.SolventBaselineWindows)
        {
            _solventBaselineCount++;
            _solventBaseline += (unaccounted - _solventBaseline) / _solventBaselineCount;
            return;
        }

        double excess = unaccounted - _solventBaseline;
        double threshold = Math.Max(_settings.SolventLossKgPerHour, _settings.SolventLossFraction * solventFlow);
        var key = new AlertKey("solvent-loss", null, null);
        bool active = _alerts.IsActive(key);
        bool open = excess > (active || _solventMeterBias is not null ? threshold / 2 : threshold) && excess > 3 * sigma;

        // An open balance is a loss or a solvent meter that reads high; the onset tells which (SolventOnsetTest). Once
        // judged, the verdict holds while the balance stays open.
        SolventOnsetVerdict? verdict = null;
        if (open && !active && _solventMeterBias is null)
        {
            verdict = _solventOnset.Judge();
            if (verdict.Kind == SolventOnsetKind.MeterBias && _solventMeter is not null)
            {
                _solventMeterBias = verdict;
            }
        }
        else if (!open)
        {
            _solventMeterBias = null;
        }

        string unit = _unit.System.FlowUnit;
        string onset = verdict?.Kind switch
        {
            SolventOnsetKind.Loss => $"; lost between the solvent meter and the unit (or from the unit): when the balance opened the extract's solvent fell by {verdict.Size:F1} {unit} while the meter did not move (chi-square {verdict.LossChiSquare:F1} for a loss against {verdict.BiasChiSquare:F0} for a biased meter)",
            SolventOnsetKind.Undecided => "; a loss, or a solvent meter that reads high: the onset does not tell them apart",
            _ => string.Empty,
        };
        _alerts.Update(end, key, open && _solventMeterBias is null, AlertSeverity.High,
            $"{excess:F1} {unit} of solvent are unaccounted for (sigma {sigma:F1} {unit}; set point {threshold:F1} {unit}){onset}",
            new Dictionary<string, double> { ["unaccounted"] = excess, ["sigma"] = sigma, ["threshold"] = threshold },
            output);
    }

    // What the dynamic model sees of this window: the reconciled inlets and the analyzers of the stage raffinates and
    // of the final extract.
    private TrackerWindow TrackerWindowOf(MaterialStream feed, MaterialStream solvent, double temperature, Dictionary<string, WindowMeasurement> byTag)
    {
        var raffinate = new EstimatedValue?[_unit.Stages];
        for (int k = 1; k <= _unit.Stages; k++)
        {
            raffinate[k - 1] = AnalyzerOf(UnitStream.RaffinateOf(k), byTag) is { } m ? new EstimatedValue(m.Value, m.Sigma) : null;
        }

        EstimatedValue? extract = AnalyzerOf(_unit.FinalExtract, byTag) is { } e ? new EstimatedValue(e.Value, e.Sigma) : null;
        return new TrackerWindow(feed, solvent, temperature, raffinate, extract);
    }

    // The window mean of the analyzer of a stream's solute, if it has one and it passed the signal checks.
    private WindowMeasurement? AnalyzerOf(UnitStream stream, Dictionary<string, WindowMeasurement> byTag)
    {
        QuantityKey key = QuantityKey.FractionOf(_model.StreamId(stream), _soluteId);
        foreach (WindowMeasurement w in byTag.Values)
        {
            if (w.Key == key && _model.Binding(w.Tag)!.Instrument.IsAnalyzer)
            {
                return w;
            }
        }

        return null;
    }

    // The solvent balance is open: a loss is raised, or the solvent meter was found biased by the onset test.
    private bool SolventBalanceOpen() => _alerts.IsActive(new AlertKey("solvent-loss", null, null)) || _solventMeterBias is not null;

    // An analyzer is a suspect instrument: every balance carries its error.
    private bool AnyAnalyzerSuspect() => _checkers.Keys.Any(t => _model.Binding(t)!.Instrument.Quantity == InstrumentQuantity.Fraction && _alerts.IsActive(new AlertKey("suspect-instrument", null, t)));

    /// <summary>
    /// The latest efficiencies as the cascade model takes them: an estimate may lie a little above 1 (or near 0) by
    /// noise, but a Murphree stage beyond equilibrium is not a stage the model can solve.
    /// </summary>
    // The efficiencies the models run with: the last steady window's, or where given the dynamic fit of this window;
    // with their sigmas (0.02 where none is known yet).
    private (double[] Values, double[] Sigmas) ModelEfficiencies(EstimatedValue?[]? current)
    {
        double[] values = new double[_unit.Stages], sigmas = new double[_unit.Stages];
        for (int k = 0; k < _unit.Stages; k++)
        {
            (double e, double s) = current?[k] is { } fit && double.IsFinite(fit.Value) ? (fit.Value, fit.Sigma) : (_lastEfficiency[k], _lastSigma[k]);
            values[k] = Math.Clamp(e, 0.02, 1);
            sigmas[k] = s > 0 && double.IsFinite(s) ? s : 0.02;
        }

        return (values, sigmas);
    }

    private (double Value, double Sigma) SoftSensor(MaterialStream feed, MaterialStream solvent, double temperature, bool steady, double[] efficiencies, double[] sigmas)
    {
        try
        {
            var solver = new CascadeSolver(_unit.Equilibrium, temperature);
            double[] eff = [.. efficiencies];
            if (_softRaised.Length != eff.Length)
            {
                _softRaised = new CascadeResult?[eff.Length];
                _softRaisedBy = new double[eff.Length];
            }

            // The central cascade from the last window's (a few Newton steps: the same answer within the solver's
            // tolerance, see CascadeSolver.Solve); from the split of feed plus solvent should that start fail.
            CascadeResult central = SolveNear(solver, feed, solvent, eff, _softCentral is { } last ? CascadeSolver.StartProfile(last) : null);
            double x = central.Raffinate.Composition.Solute;

            // Each efficiency raised by its sigma, the cascade solved from the central profile moved as the last window's
            // raised cascade moved from its central one (scaled to this window's step), or from the central profile
            // itself; an efficiency already at 1 leaves the central answer.
            double variance = 0;
            for (int k = 0; k < eff.Length; k++)
            {
                double s = sigmas[k];
                double saved = eff[k];
                eff[k] = Math.Clamp(saved + s, 0.02, 1);
                double by = eff[k] - saved;
                double up = x;
                if (by != 0)
                {
                    CascadeResult raised = SolveNear(solver, feed, solvent, eff, RaisedStart(central, k, by), central);
                    up = raised.Raffinate.Composition.Solute;
                    _softRaised[k] = raised;
                }

                _softRaisedBy[k] = by;
                eff[k] = saved;
                variance += (up - x) * (up - x);
            }

            _softCentral = central;
            double sigma = Math.Sqrt(variance);
            return (x, steady ? sigma : 2 * sigma);
        }
        catch (Exception e) when (e is CascadeException or EquilibriumException or ArgumentException)
        {
            _softCentral = null;
            return (double.NaN, double.NaN);
        }
    }

    // The soft sensor's cascade from a starting profile; should Newton fail from it, the solve of the old way (from
    // the split of feed plus solvent, or for a raised efficiency from the central profile, given as fallback).
    private CascadeResult SolveNear(CascadeSolver solver, MaterialStream feed, MaterialStream solvent, double[] eff, double[]? start, CascadeResult? fallback = null)
    {
        if (start is not null && _unit.Arrangement == CascadeArrangement.Countercurrent)
        {
            try
            {
                return solver.SolveCountercurrent(feed, solvent, eff, start);
            }
            catch (CascadeException)
            {
            }
        }

        return solver.Solve(_unit.Arrangement, feed, solvent, eff, fallback);
    }

    // Where the cascade with stage k's efficiency raised by `by` should land: the central profile moved as the last
    // window's raised cascade moved from its central one, in proportion to the steps (fractions by difference, flows
    // by ratio); the central profile itself when the last window has none.
    private double[] RaisedStart(CascadeResult central, int k, double by)
    {
        double[] start = CascadeSolver.StartProfile(central);
        if (_softCentral is not { } lastCentral || _softRaised[k] is not { } lastRaised || _softRaisedBy[k] == 0 || lastCentral.Stages.Count != central.Stages.Count)
        {
            return start;
        }

        double[] from = CascadeSolver.StartProfile(lastCentral), to = CascadeSolver.StartProfile(lastRaised);
        double ratio = by / _softRaisedBy[k];
        for (int i = 0; i < start.Length; i++)
        {
            start[i] = i % 4 < 2 ? start[i] + (ratio * (to[i] - from[i])) : from[i] > 0 ? start[i] * (1 + (ratio * ((to[i] / from[i]) - 1))) : start[i];
        }

        return start;
    }

    private double? SolventToFeedNeeded(MaterialStream feed, Ternary solventComposition, double temperature, double[] efficiencies)
    {
        try
        {
            var design = new CascadeDesign(_unit.Equilibrium, temperature);
            if (_unit.RaffinateSoluteSpec >= feed.Composition.Solute || feed.Flow <= 0)
            {
                return null;
            }

            DesignResult r = design.FindSolvent(feed, solventComposition, _unit.Stages, DesignTarget.RaffinateFraction(_unit.RaffinateSoluteSpec), efficiencies);
            return r.SolventFlow / feed.Flow;
        }
        catch (Exception e) when (e is InfeasibleSpecificationException or CascadeException or EquilibriumException or ArgumentException)
        {
            return null;
        }
    }

    /// <summary>What one reading of a tag needs, found by one lookup; and the accumulator of the window it last went to.</summary>
    private sealed class TagSlot(SignalChecker checker, InstrumentBinding binding, bool steady)
    {
        public SignalChecker Checker { get; } = checker;

        public InstrumentBinding Binding { get; } = binding;

        public bool Steady { get; } = steady;

        public long Window { get; set; } = long.MinValue;

        public TagWindow? TagWindow { get; set; }
    }

    /// <summary>One window's solvent accounting: dissolved in the raffinate, unaccounted with its sigma, and what the
    /// onset test compares (solvent by the meter, solvent leaving in the extract), per hour.</summary>
    private readonly record struct SolventBalance(double Dissolved, double Unaccounted, double Sigma, double Meter, double MeterSigma, double ExtractSolvent, double ExtractSolventSigma);
}

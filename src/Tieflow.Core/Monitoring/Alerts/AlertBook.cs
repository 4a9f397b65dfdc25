using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Core.Monitoring.Alerts;

/// <summary>
/// The alert state of one unit, following the practice of ISA-18.2 (Management of Alarm Systems for the Process
/// Industries, ANSI/ISA-18.2-2016): a condition must hold for the on-delay before its alert is raised and be gone for the
/// off-delay before it clears (callers apply the deadband when they state the condition); at most a flood limit of raises
/// per flood window, beyond which raises are suppressed and counted; every record carries its evidence.
/// </summary>
public sealed class AlertBook
{
    private readonly string _unit;
    private readonly AnalysisSettings _settings;
    private readonly Dictionary<AlertKey, State> _states = [];
    private readonly Queue<DateTimeOffset> _recentRaises = new();
    private readonly List<AlertEpisode> _episodes = [];
    private DateTimeOffset? _floodNoticeAt;

    /// <summary>Creates the alert book of a unit.</summary>
    /// <param name="unit">The unit's id.</param>
    /// <param name="settings">Delays and flood limits.</param>
    public AlertBook(string unit, AnalysisSettings settings)
    {
        _unit = unit;
        _settings = settings;
    }

    /// <summary>Every alert raised so far, in raise order (active ones have no clear time).</summary>
    public IReadOnlyList<AlertEpisode> Episodes => _episodes;

    /// <summary>Raises that the flood limit suppressed.</summary>
    public int Suppressed { get; private set; }

    /// <summary>True while the alert is raised.</summary>
    /// <param name="key">What it is about.</param>
    public bool IsActive(AlertKey key) => _states.TryGetValue(key, out State? s) && s.Active;

    /// <summary>The alerts currently raised.</summary>
    public IEnumerable<AlertEpisode> Active => _episodes.Where(e => e.Cleared is null);

    /// <summary>States a condition at a time; raises or clears the alert as the delays allow.</summary>
    /// <param name="time">Data time.</param>
    /// <param name="key">What it is about.</param>
    /// <param name="condition">Whether the alert's condition holds now (with the deadband applied by the caller).</param>
    /// <param name="severity">Priority if raised.</param>
    /// <param name="message">What a person reads.</param>
    /// <param name="evidence">The numbers behind it.</param>
    /// <param name="output">Receives the alert records.</param>
    /// <param name="onDelay">On-delay for this alert, or the settings' default.</param>
    public void Update(DateTimeOffset time, AlertKey key, bool condition, AlertSeverity severity, string message, IReadOnlyDictionary<string, double> evidence, List<MonitorRecord> output, TimeSpan? onDelay = null)
    {
        ArgumentNullException.ThrowIfNull(output);
        if (!_states.TryGetValue(key, out State? state))
        {
            state = new State();
            _states[key] = state;
        }

        if (condition)
        {
            state.ClearSince = null;
            if (state.Active)
            {
                return;
            }

            state.PendingSince ??= time;
            if (time - state.PendingSince.Value < (onDelay ?? _settings.OnDelay))
            {
                return;
            }

            while (_recentRaises.Count > 0 && time - _recentRaises.Peek() > _settings.FloodWindow)
            {
                _recentRaises.Dequeue();
            }

            if (_recentRaises.Count >= _settings.FloodLimit)
            {
                Suppressed++;
                if (_floodNoticeAt is null || time - _floodNoticeAt.Value > _settings.FloodWindow)
                {
                    _floodNoticeAt = time;
                    output.Add(new AlertRecord(_unit, time, "alert-flood", AlertSeverity.Medium, null, null, true,
                        $"alert flood: more than {_settings.FloodLimit} alerts within {_settings.FloodWindow}; further alerts are suppressed until it calms",
                        new Dictionary<string, double> { ["limit"] = _settings.FloodLimit, ["suppressed"] = Suppressed }));
                }

                return;
            }

            _recentRaises.Enqueue(time);
            state.Active = true;
            state.PendingSince = null;
            state.Episode = _episodes.Count;
            _episodes.Add(new AlertEpisode(key, severity, time, null, message, evidence));
            output.Add(new AlertRecord(_unit, time, key.Kind, severity, key.Stage, key.Tag, true, message, evidence));
            return;
        }

        state.PendingSince = null;
        if (!state.Active)
        {
            return;
        }

        state.ClearSince ??= time;
        if (time - state.ClearSince.Value < _settings.OffDelay)
        {
            return;
        }

        state.Active = false;
        state.ClearSince = null;
        AlertEpisode raised = _episodes[state.Episode];
        _episodes[state.Episode] = raised with { Cleared = time };
        output.Add(new AlertRecord(_unit, time, key.Kind, raised.Severity, key.Stage, key.Tag, false, $"cleared: {raised.Message}", evidence));
    }

    private sealed class State
    {
        public bool Active { get; set; }

        public DateTimeOffset? PendingSince { get; set; }

        public DateTimeOffset? ClearSince { get; set; }

        public int Episode { get; set; }
    }
}

using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;

namespace Tieflow.Service.Replay;

/// <summary>
/// Runs recorded history through the same plant analysis as live operation (<see cref="PlantAnalysis"/>), as fast as it goes. The history streams
/// (memory does not grow with its length); lab results enter at their reported time, never before.
/// </summary>
internal sealed class ReplayRunner
{
    /// <summary>Default window within which rows out of time order are put back in order.</summary>
    public static readonly TimeSpan DefaultReorderWindow = TimeSpan.FromSeconds(10);

    private readonly PlantAnalysis _analysis;
    private readonly TimeSpan _reorderWindow;
    private readonly Dictionary<string, int> _rank = new(StringComparer.Ordinal);
    private readonly TagLookup<int> _rankOf;

    /// <param name="plant">The plant.</param>
    /// <param name="reorderWindow">Source time within which rows are put back in order (<see cref="DefaultReorderWindow"/> when null).</param>
    public ReplayRunner(PlantDescription plant, TimeSpan? reorderWindow = null)
    {
        _analysis = new PlantAnalysis(plant);
        _reorderWindow = reorderWindow ?? DefaultReorderWindow;
        foreach (UnitDescription u in plant.Units)
        {
            foreach (Instrument i in u.Instruments)
            {
                _rank.TryAdd(i.Tag, _rank.Count);
            }
        }

        _rankOf = new TagLookup<int>(_rank);
    }

    /// <summary>Replays a history; records go to <paramref name="sink"/> as they are produced.</summary>
    /// <param name="history">The history rows, in time order give or take the reorder window; repeats are dropped.</param>
    /// <param name="labs">Lab results (any order).</param>
    /// <param name="sink">Receives each batch of records.</param>
    /// <param name="progress">Called now and then with the rows read.</param>
    public ReplayResult Run(IEnumerable<SignalSample> history, IReadOnlyList<LabResult> labs, Action<IReadOnlyList<MonitorRecord>> sink, Action<long>? progress = null)
    {
        var pendingLabs = new Queue<LabResult>(labs.OrderBy(l => l.Reported));
        var unknown = new Dictionary<string, long>(StringComparer.Ordinal);
        var buffer = new List<MonitorRecord>(256);
        var reorder = new ReorderBuffer(_reorderWindow);
        long rows = 0, records = 0;
        DateTimeOffset last = DateTimeOffset.MinValue;

        void Analyze(in SignalSample s)
        {
            while (pendingLabs.Count > 0 && pendingLabs.Peek().Reported <= s.Time)
            {
                _analysis.AddLab(pendingLabs.Dequeue(), buffer);
            }

            _analysis.Add(s, buffer);
            if (buffer.Count > 0)
            {
                records += buffer.Count;
                sink(buffer);
                buffer.Clear();
            }
        }

        foreach (SignalSample s in history)
        {
            rows++;
            if (s.Time > last)
            {
                last = s.Time;
            }

            // Rows of tags the plant does not have are counted here and never held by the reorder buffer; the others
            // are put in order of time and, within one time, of the plant file's instruments.
            if (!_rankOf.TryGetValue(s.Tag, out int rank))
            {
                unknown[s.Tag] = unknown.TryGetValue(s.Tag, out long n) ? n + 1 : 1;
            }
            else
            {
                reorder.Add(s, rank);
                while (reorder.TryRelease(out SignalSample r))
                {
                    Analyze(r);
                }
            }

            if (progress is not null && (rows & 0xFFFFF) == 0)
            {
                progress(rows);
            }
        }

        while (reorder.TryDrain(out SignalSample r))
        {
            Analyze(r);
        }

        if (rows > 0)
        {
            while (pendingLabs.Count > 0 && pendingLabs.Peek().Reported <= last)
            {
                _analysis.AddLab(pendingLabs.Dequeue(), buffer);
            }

            _analysis.Advance(last, buffer);
            records += buffer.Count;
            if (buffer.Count > 0)
            {
                sink(buffer);
            }
        }

        progress?.Invoke(rows);
        return new ReplayResult([.. _analysis.Units.Select(a => (a.Model.Unit, a.Summary(), (EvaluationResult?)null))], unknown, rows, records)
        {
            Duplicates = reorder.Duplicates,
            Conflicts = reorder.Conflicts,
            Late = reorder.Late,
        };
    }

    /// <summary>Adds the evaluation against a truth file to a replay's result.</summary>
    public static ReplayResult Evaluate(ReplayResult result, TruthFile truth)
    {
        var units = new List<(UnitDescription, UnitSummary, EvaluationResult?)>();
        foreach ((UnitDescription unit, UnitSummary summary, _) in result.Units)
        {
            UnitTruth? t = truth.ForUnit(unit.Id);
            EvaluationResult? e = t is null || summary.To is null ? null : TruthEvaluator.Evaluate(t, summary, unit.RaffinateSoluteSpec, unit.Stages, summary.To.Value);
            units.Add((unit, summary, e));
        }

        return result with { Units = units };
    }
}

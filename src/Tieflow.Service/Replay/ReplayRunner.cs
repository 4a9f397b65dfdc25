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
    private readonly PlantAnalysis _analysis;

    public ReplayRunner(PlantDescription plant) => _analysis = new PlantAnalysis(plant);

    /// <summary>Replays a history; records go to <paramref name="sink"/> as they are produced.</summary>
    /// <param name="history">The history rows, in time order give or take a few seconds.</param>
    /// <param name="labs">Lab results (any order).</param>
    /// <param name="sink">Receives each batch of records.</param>
    /// <param name="progress">Called now and then with the rows read.</param>
    public ReplayResult Run(IEnumerable<SignalSample> history, IReadOnlyList<LabResult> labs, Action<IReadOnlyList<MonitorRecord>> sink, Action<long>? progress = null)
    {
        var pendingLabs = new Queue<LabResult>(labs.OrderBy(l => l.Reported));
        var buffer = new List<MonitorRecord>(256);
        long rows = 0, records = 0;
        foreach (SignalSample s in history)
        {
            rows++;
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

            if (progress is not null && (rows & 0xFFFFF) == 0)
            {
                progress(rows);
            }
        }

        if (rows > 0 && _analysis.LastTime is DateTimeOffset last)
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
        return new ReplayResult([.. _analysis.Units.Select(a => (a.Model.Unit, a.Summary(), (EvaluationResult?)null))], new Dictionary<string, long>(_analysis.UnknownTags, StringComparer.Ordinal), rows, records);
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

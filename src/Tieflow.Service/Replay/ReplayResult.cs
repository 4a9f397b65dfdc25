using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Plant;

namespace Tieflow.Service.Replay;

/// <summary>What a replay saw, per unit, and its evaluation against the truth when one was given.</summary>
/// <param name="Units">Per unit: its description, the analysis summary and the evaluation (or null).</param>
/// <param name="UnknownTags">Tags in the history that no unit of the plant has, with their row counts.</param>
/// <param name="Rows">History rows read.</param>
/// <param name="Records">Records produced.</param>
internal sealed record ReplayResult(
    IReadOnlyList<(UnitDescription Unit, UnitSummary Summary, EvaluationResult? Evaluation)> Units,
    IReadOnlyDictionary<string, long> UnknownTags,
    long Rows,
    long Records);

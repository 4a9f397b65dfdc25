using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Plant;
using Tieflow.Files;

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
    long Records)
{
    /// <summary>Rows dropped as exact repeats of a row already read (same tag, time, value and quality).</summary>
    public long Duplicates { get; init; }

    /// <summary>Rows dropped for a tag and time already read with another value or quality (the first is kept).</summary>
    public long Conflicts { get; init; }

    /// <summary>Rows dropped for coming later than the reorder window allows.</summary>
    public long Late { get; init; }

    /// <summary>Lines of the history file that are not records.</summary>
    public long BadLines { get; init; }

    /// <summary>The first of those lines, with their reasons.</summary>
    public IReadOnlyList<HistoryBadLine> FirstBadLines { get; init; } = [];
}

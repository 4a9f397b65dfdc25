using Tieflow.Core.Monitoring.Alerts;

namespace Tieflow.Core.Monitoring;

/// <summary>What one unit's analysis saw over a run, for summaries and reports.</summary>
public sealed record UnitSummary
{
    /// <summary>The unit's id.</summary>
    public required string Unit { get; init; }

    /// <summary>Time of the first sample, or null without samples.</summary>
    public DateTimeOffset? From { get; init; }

    /// <summary>Time of the last sample, or null without samples.</summary>
    public DateTimeOffset? To { get; init; }

    /// <summary>Samples received.</summary>
    public long Samples { get; init; }

    /// <summary>Windows closed.</summary>
    public int Windows { get; init; }

    /// <summary>Windows reconciled.</summary>
    public int Reconciled { get; init; }

    /// <summary>Steady windows.</summary>
    public int Steady { get; init; }

    /// <summary>Windows whose reconciliation failed.</summary>
    public int Failures { get; init; }

    /// <summary>The last failure's time and message, or null.</summary>
    public string? LastFailure { get; init; }

    /// <summary>Per stage: mean and last determined efficiency (NaN when never determined).</summary>
    public required IReadOnlyList<(int Stage, double Mean, double Last)> Stages { get; init; }

    /// <summary>The unit's overall efficiency in the last steady window, its sigma, theoretical stages and HETS (m, columns only).</summary>
    public required (double Efficiency, double Sigma, double TheoreticalStages, double? Hets) Overall { get; init; }

    /// <summary>Every alert raised.</summary>
    public required IReadOnlyList<AlertEpisode> Alerts { get; init; }

    /// <summary>The raffinate soft sensor's name and last value.</summary>
    public required (string Name, double Last) SoftSensor { get; init; }

    /// <summary>Lab results compared with the soft sensor.</summary>
    public required IReadOnlyList<LabComparison> LabComparisons { get; init; }

    /// <summary>Soft-sensor values by window time, for evaluation against the truth.</summary>
    public required IReadOnlyList<(DateTimeOffset Time, double Value)> SoftSensorTrace { get; init; }

    /// <summary>The efficiency of every stage in every steady window (one per stage and window; a few kilobytes a day).</summary>
    public IReadOnlyList<EfficiencyPoint> EfficiencyTrace { get; init; } = [];
}

using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Service.Report;

/// <summary>One alert from raise to clear, as the report lists it.</summary>
internal sealed record ReportAlert(AlertKey Key, AlertSeverity Severity, DateTimeOffset Raised, DateTimeOffset? Cleared, string Message, IReadOnlyDictionary<string, double> Evidence)
{
    /// <summary>A short label of what it concerns: the kind with its stage or tag.</summary>
    public string Label => Key.Kind + (Key.Stage is int s ? $" stage {s}" : string.Empty) + (Key.Tag is null ? string.Empty : $" {Key.Tag}");
}

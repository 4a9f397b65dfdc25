namespace Tieflow.Core.Monitoring.Records;

/// <summary>An alert's priority.</summary>
public enum AlertSeverity
{
    /// <summary>Look at it this shift.</summary>
    Low,

    /// <summary>Look at it soon.</summary>
    Medium,

    /// <summary>Look at it now.</summary>
    High,
}

namespace Tieflow.Core.Monitoring.Alerts;

/// <summary>What an alert is about: its kind and, where it has them, the stage and the tag.</summary>
/// <param name="Kind">The alert kind (<c>efficiency-drift</c>, ...).</param>
/// <param name="Stage">The stage, or null.</param>
/// <param name="Tag">The tag, or null.</param>
public readonly record struct AlertKey(string Kind, int? Stage, string? Tag);

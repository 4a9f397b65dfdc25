using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Core.Monitoring.Alerts;

/// <summary>One raised alert from raise to clear, for summaries and reports.</summary>
/// <param name="Key">What it is about.</param>
/// <param name="Severity">Its priority.</param>
/// <param name="Raised">When it was raised.</param>
/// <param name="Cleared">When it cleared, or null while active.</param>
/// <param name="Message">The message it was raised with.</param>
/// <param name="Evidence">The numbers it was raised on.</param>
public sealed record AlertEpisode(AlertKey Key, AlertSeverity Severity, DateTimeOffset Raised, DateTimeOffset? Cleared, string Message, IReadOnlyDictionary<string, double> Evidence);

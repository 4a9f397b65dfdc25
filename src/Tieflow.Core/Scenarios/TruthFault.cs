namespace Tieflow.Core.Scenarios;

/// <summary>A fault as the truth file records it, with absolute times.</summary>
/// <param name="Kind">The fault kind.</param>
/// <param name="Stage">The stage, or null.</param>
/// <param name="Tag">The instrument's tag, or null.</param>
/// <param name="Start">When it started (UTC).</param>
/// <param name="End">When it ended (UTC), or null when it lasted to the end of the run.</param>
public sealed record TruthFault(FaultKind Kind, int? Stage, string? Tag, DateTimeOffset Start, DateTimeOffset? End);

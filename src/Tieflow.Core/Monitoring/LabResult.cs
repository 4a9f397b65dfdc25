namespace Tieflow.Core.Monitoring;

/// <summary>One lab result: a fraction on the plant's basis of a component of a stream.</summary>
/// <param name="Sampled">When the sample was drawn (UTC).</param>
/// <param name="Reported">When its result became known (UTC); never before <paramref name="Sampled"/>.</param>
/// <param name="Stream">The stream's name in the plant file (for example <c>raffinate</c>).</param>
/// <param name="Component">The component's id.</param>
/// <param name="Value">The fraction, 0 to 1.</param>
public sealed record LabResult(DateTimeOffset Sampled, DateTimeOffset Reported, string Stream, string Component, double Value);

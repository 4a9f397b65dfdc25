namespace Tieflow.Core.Monitoring;

/// <summary>A lab result set beside the soft sensor's value at the time the sample was drawn.</summary>
/// <param name="Sampled">When the sample was drawn.</param>
/// <param name="Reported">When its result became known.</param>
/// <param name="Lab">The lab's fraction.</param>
/// <param name="Predicted">The soft sensor at the sampling time, with the bias known then.</param>
/// <param name="Sigma">Combined sigma of the difference.</param>
public sealed record LabComparison(DateTimeOffset Sampled, DateTimeOffset Reported, double Lab, double Predicted, double Sigma);

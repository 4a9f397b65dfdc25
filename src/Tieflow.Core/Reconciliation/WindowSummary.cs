namespace Tieflow.Core.Reconciliation;

/// <summary>Mean and spread of the samples of one signal over a balance window.</summary>
/// <param name="Count">Samples used.</param>
/// <param name="Mean">Arithmetic mean.</param>
/// <param name="StandardDeviation">Sample standard deviation (n - 1 in the denominator); zero for one sample.</param>
/// <param name="StandardErrorOfMean">Standard deviation divided by the square root of the count.</param>
/// <param name="Minimum">Smallest sample.</param>
/// <param name="Maximum">Largest sample.</param>
public sealed record WindowSummary(int Count, double Mean, double StandardDeviation, double StandardErrorOfMean, double Minimum, double Maximum);

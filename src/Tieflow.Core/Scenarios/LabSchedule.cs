namespace Tieflow.Core.Scenarios;

/// <summary>How often the simulated lab samples each lab point, how long its results take, and their noise.</summary>
/// <param name="Interval">Time between samples, positive.</param>
/// <param name="Delay">Time from drawing a sample to its result, zero or positive.</param>
/// <param name="Sigma">Standard deviation of a lab result, as a fraction on the system's basis; zero or positive.</param>
public sealed record LabSchedule(TimeSpan Interval, TimeSpan Delay, double Sigma);

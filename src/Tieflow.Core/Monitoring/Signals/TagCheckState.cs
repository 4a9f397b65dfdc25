namespace Tieflow.Core.Monitoring.Signals;

/// <summary>The outcome of checking one reading, and the tag's state after it.</summary>
/// <param name="Used">True when the reading enters the analysis (a new value that passed every check).</param>
/// <param name="IsUpdate">False for an analyzer's held value repeated between updates (neither used nor a problem).</param>
/// <param name="Problem">The tag's current problem, <see cref="SignalProblem.None"/> when it is healthy.</param>
/// <param name="Detail">What a person reads about the problem, empty when there is none.</param>
public readonly record struct TagCheckState(bool Used, bool IsUpdate, SignalProblem Problem, string Detail);

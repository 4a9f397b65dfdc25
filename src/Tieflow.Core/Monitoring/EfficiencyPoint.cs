namespace Tieflow.Core.Monitoring;

/// <summary>A stage efficiency of one steady window.</summary>
/// <param name="Time">End of the window.</param>
/// <param name="Stage">1-based stage.</param>
/// <param name="Value">Efficiency.</param>
/// <param name="Sigma">Its sigma.</param>
/// <param name="TheoreticalStages">For a shared efficiency fitted to the terminal streams (a column): the theoretical stages that give the same raffinate.</param>
public readonly record struct EfficiencyPoint(DateTimeOffset Time, int Stage, double Value, double Sigma, double? TheoreticalStages);

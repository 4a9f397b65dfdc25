namespace Tieflow.Core.Scenarios;

/// <summary>The true state of a simulated unit at one time. Fractions on the system's basis; flows kg/h or kmol/h.</summary>
/// <param name="Time">The time (UTC).</param>
/// <param name="StageEfficiency">True Murphree raffinate efficiency per stage, stage 1 first.</param>
/// <param name="RaffinateSolute">True solute fraction of the final raffinate.</param>
/// <param name="Entrainment">Carried-over mass fraction per stage, stage 1 first (0 without entrainment).</param>
/// <param name="SolventLossRate">Solvent lost unmeasured, kg/h (kmol/h on a mole basis).</param>
/// <param name="TheoreticalStages">Column units: the fractional number of equilibrium stages that gives the same final raffinate at the same flows; null otherwise.</param>
public sealed record TruthSample(
    DateTimeOffset Time,
    IReadOnlyList<double> StageEfficiency,
    double RaffinateSolute,
    IReadOnlyList<double> Entrainment,
    double SolventLossRate,
    double? TheoreticalStages);

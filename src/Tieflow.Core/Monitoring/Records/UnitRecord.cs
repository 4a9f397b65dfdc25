namespace Tieflow.Core.Monitoring.Records;

/// <summary>A unit's state in a window (<c>tieflow_unit</c>). Solvent flows in kg/h (kmol/h on a mole basis).</summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Window time (UTC).</param>
/// <param name="GlobalTest">Chi-square statistic of the reconciliation's global test.</param>
/// <param name="GlobalTestCritical">Its critical value at the configured significance.</param>
/// <param name="Steady">Whether the window passed the steady-state test.</param>
/// <param name="SolventLossDissolved">Solvent leaving dissolved in the raffinate.</param>
/// <param name="SolventLossUnaccounted">Solvent that the reconciled balance does not account for.</param>
/// <param name="SolventToFeedNeeded">Solvent-to-feed ratio that would bring the raffinate to spec at today's efficiencies, or null when on spec.</param>
public sealed record UnitRecord(
    string Unit,
    DateTimeOffset Time,
    double GlobalTest,
    double GlobalTestCritical,
    bool Steady,
    double SolventLossDissolved,
    double SolventLossUnaccounted,
    double? SolventToFeedNeeded)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_unit";
}

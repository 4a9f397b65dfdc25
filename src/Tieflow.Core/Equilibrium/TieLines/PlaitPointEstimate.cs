using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>
/// An estimate of the plait point (where the two phases become identical) extrapolated from a tie-line table.
/// It is an extrapolation beyond the data: treat it as rough (a few hundredths in each fraction).
/// </summary>
/// <param name="Status">Whether an estimate was found.</param>
/// <param name="Composition">Fractions on the system's basis; the last tie line's raffinate when not found.</param>
public sealed record PlaitPointEstimate(PlaitPointStatus Status, Ternary Composition)
{
    /// <summary>True when <see cref="Status"/> is <see cref="PlaitPointStatus.Estimated"/>.</summary>
    public bool Found => Status == PlaitPointStatus.Estimated;
}

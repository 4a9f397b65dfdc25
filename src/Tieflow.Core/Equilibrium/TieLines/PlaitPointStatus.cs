namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>Outcome of a plait point estimate from a tie-line table.</summary>
public enum PlaitPointStatus
{
    /// <summary>The conjugate curve, extrapolated past the last tie line, met the binodal: an estimate exists.</summary>
    Estimated,

    /// <summary>The extrapolated conjugate curve did not meet the binodal between the last tie line's ends.</summary>
    NotFound,
}

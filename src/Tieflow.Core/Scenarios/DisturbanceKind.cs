namespace Tieflow.Core.Scenarios;

/// <summary>Normal changes of operation that a scenario can make.</summary>
public enum DisturbanceKind
{
    /// <summary>A new feed flow (kg/h or kmol/h on the system's basis).</summary>
    FeedFlow,

    /// <summary>A new solute fraction of the feed (system basis); the diluent makes up the rest.</summary>
    FeedSolute,

    /// <summary>A new fresh solvent flow (kg/h or kmol/h on the system's basis).</summary>
    SolventFlow,

    /// <summary>A new operating temperature, kelvin.</summary>
    Temperature,
}

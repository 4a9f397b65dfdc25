namespace Tieflow.Core.Scenarios;

/// <summary>A change of a set value, reached linearly over <see cref="Ramp"/> from <see cref="Start"/> (an offset from the scenario's start).</summary>
/// <param name="Kind">What changes.</param>
/// <param name="Unit">The unit it happens in; null when the plant has one unit.</param>
/// <param name="Start">When the change starts.</param>
/// <param name="Value">The new set value (kg/h or kmol/h, fraction, kelvin).</param>
/// <param name="Ramp">Time to reach it; zero for a step.</param>
public sealed record Disturbance(DisturbanceKind Kind, string? Unit, TimeSpan Start, double Value, TimeSpan Ramp)
{
    /// <summary>The contract's text name of a disturbance kind.</summary>
    /// <param name="kind">The kind.</param>
    public static string KindName(DisturbanceKind kind) => kind switch
    {
        DisturbanceKind.FeedFlow => "feed-flow",
        DisturbanceKind.FeedSolute => "feed-solute",
        DisturbanceKind.SolventFlow => "solvent-flow",
        DisturbanceKind.Temperature => "temperature",
        _ => throw new ArgumentOutOfRangeException(nameof(kind), kind, "Unknown disturbance kind."),
    };
}

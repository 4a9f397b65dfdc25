using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Plant;

/// <summary>
/// One instrument of a unit, as the plant file describes it. Readings, <see cref="Sigma"/>, <see cref="RangeLow"/>,
/// <see cref="RangeHigh"/> and <see cref="Resolution"/> are in the engineering unit <see cref="Unit"/>; the
/// <c>Base</c> members give them in the base unit of the quantity.
/// </summary>
public sealed record Instrument
{
    /// <summary>Tag, unique within the plant (for example <c>FI-301</c>).</summary>
    public required string Tag { get; init; }

    /// <summary>OPC UA NodeId in the standard text form, unique within the plant.</summary>
    public required string Node { get; init; }

    /// <summary>What it measures.</summary>
    public required InstrumentQuantity Quantity { get; init; }

    /// <summary>The stream measured (flows and fractions).</summary>
    public UnitStream? Stream { get; init; }

    /// <summary>The stage measured, 1-based (temperatures).</summary>
    public int? Stage { get; init; }

    /// <summary>The component whose fraction is measured (fractions).</summary>
    public ComponentRole? Component { get; init; }

    /// <summary>The engineering unit of readings.</summary>
    public required EngineeringUnit Unit { get; init; }

    /// <summary>Standard deviation of one reading, engineering unit, positive.</summary>
    public required double Sigma { get; init; }

    /// <summary>Lower end of the transmitter's range (readings below are bad), engineering unit; negative infinity without a range.</summary>
    public double RangeLow { get; init; } = double.NegativeInfinity;

    /// <summary>Upper end of the transmitter's range (readings above are bad), engineering unit; positive infinity without a range.</summary>
    public double RangeHigh { get; init; } = double.PositiveInfinity;

    /// <summary>Smallest step of a reading (quantisation), engineering unit; 0 for none.</summary>
    public double Resolution { get; init; }

    /// <summary>For an analyzer: how old the process state is that a new value describes. Null for flow meters and thermometers.</summary>
    public TimeSpan? DeadTime { get; init; }

    /// <summary>For an analyzer: how often a new value arrives (the value is held between updates). Null for continuous instruments.</summary>
    public TimeSpan? UpdateInterval { get; init; }

    /// <summary>For an analyzer: when within each update interval its value arrives (staggers the streams of a multiplexed analyzer).</summary>
    public TimeSpan UpdateOffset { get; init; }

    /// <summary>True for an analyzer (a sample-and-hold instrument with a dead time).</summary>
    public bool IsAnalyzer => UpdateInterval is not null;

    /// <summary><see cref="Sigma"/> in the base unit.</summary>
    public double SigmaBase => Unit.DifferenceToBase(Sigma);

    /// <summary><see cref="RangeLow"/> in the base unit.</summary>
    public double RangeLowBase => Unit.ToBase(RangeLow);

    /// <summary><see cref="RangeHigh"/> in the base unit.</summary>
    public double RangeHighBase => Unit.ToBase(RangeHigh);

    /// <summary>True when a reading (engineering unit) lies inside the transmitter's range.</summary>
    /// <param name="reading">The reading.</param>
    public bool InRange(double reading) => reading >= RangeLow && reading <= RangeHigh;
}

using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Plant;

/// <summary>One extraction unit of a plant, as its engineers describe it.</summary>
public sealed record UnitDescription
{
    /// <summary>Unit id, unique within the plant (for example <c>X300</c>).</summary>
    public required string Id { get; init; }

    /// <summary>Mixer-settler train or column.</summary>
    public required UnitKind Kind { get; init; }

    /// <summary>Name of the chemical system.</summary>
    public required string SystemName { get; init; }

    /// <summary>Components, roles and basis.</summary>
    public required TernarySystem System { get; init; }

    /// <summary>The equilibrium model of the system.</summary>
    public required IPhaseEquilibrium Equilibrium { get; init; }

    /// <summary>How the stages are connected.</summary>
    public required CascadeArrangement Arrangement { get; init; }

    /// <summary>Number of stages (of theoretical stages at design for a column), at least 1.</summary>
    public required int Stages { get; init; }

    /// <summary>Design operating point.</summary>
    public required NominalOperation Nominal { get; init; }

    /// <summary>Hold-up per stage.</summary>
    public required Holdup Holdup { get; init; }

    /// <summary>Highest solute fraction of the final raffinate that is on spec (system basis).</summary>
    public required double RaffinateSoluteSpec { get; init; }

    /// <summary>Active height of a column, metres; null for a mixer-settler train.</summary>
    public double? ColumnHeightMetres { get; init; }

    /// <summary>The unit's instruments.</summary>
    public required IReadOnlyList<Instrument> Instruments { get; init; }

    /// <summary>The unit's lab sample points.</summary>
    public required IReadOnlyList<LabPoint> Labs { get; init; }

    /// <summary>
    /// Overrides of the analysis and alert settings by key, as read from the plant file's <c>alerts</c> object: numbers as
    /// written, durations in seconds.
    /// </summary>
    public IReadOnlyDictionary<string, double> AlertOverrides { get; init; } = new Dictionary<string, double>();

    /// <summary>The final raffinate stream.</summary>
    public UnitStream FinalRaffinate => UnitStream.FinalRaffinate(Stages);

    /// <summary>The extract product stream.</summary>
    public UnitStream FinalExtract => UnitStream.FinalExtract(Arrangement);

    /// <summary>The record name of a stream of this unit (<see cref="UnitStream.Name"/>).</summary>
    /// <param name="stream">The stream.</param>
    public string StreamName(UnitStream stream) => stream.Name(Stages, Arrangement);

    /// <summary>The instrument with a tag, or null.</summary>
    /// <param name="tag">The tag.</param>
    public Instrument? FindInstrument(string tag) => Instruments.FirstOrDefault(i => i.Tag == tag);
}

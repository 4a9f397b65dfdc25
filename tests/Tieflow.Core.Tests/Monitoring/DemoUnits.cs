using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Plant;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Monitoring;

/// <summary>
/// A four-stage counter-current train on the published acetone - water - 1,1,2-trichloroethane tie lines, instrumented as
/// the invented demo unit X300 (Brackenmoor demo scenario): terminal flow meters, a solute analyzer on every raffinate and
/// on the final extract, stage thermometers.
/// </summary>
internal static class DemoUnits
{
    public static readonly TieLineTableModel Model = new(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C);

    public static UnitDescription Train(int stages = 4, CascadeArrangement arrangement = CascadeArrangement.Countercurrent)
    {
        EngineeringUnit kgh = new("kg/h", 1, 0), percent = new("percent", 0.01, 0), degC = new("degC", 1, 273.15);
        var instruments = new List<Instrument>
        {
            Flow("FI-301", UnitStream.Feed, 8),
            Flow("FI-302", UnitStream.Solvent, 4),
            Flow("FI-305", UnitStream.FinalRaffinate(stages), 8),
            Flow("FI-306", UnitStream.FinalExtract(arrangement), 6),
            Analyzer("AI-300", UnitStream.Feed, ComponentRole.Solute),
            Analyzer("AI-316", UnitStream.FinalExtract(arrangement), ComponentRole.Solute),
        };
        for (int k = 1; k <= stages; k++)
        {
            instruments.Add(Analyzer($"AI-31{k}", UnitStream.RaffinateOf(k), ComponentRole.Solute));
            instruments.Add(new Instrument { Tag = $"TI-30{k}", Node = $"ns=2;s=TI30{k}", Quantity = InstrumentQuantity.Temperature, Stage = k, Unit = degC, Sigma = 0.2 });
        }

        return new UnitDescription
        {
            Id = "X300",
            Kind = UnitKind.MixerSettler,
            SystemName = "acetone - water - 1,1,2-trichloroethane",
            System = ReferenceTables.TrichloroethaneSystem,
            Equilibrium = Model,
            Arrangement = arrangement,
            Stages = stages,
            Nominal = new NominalOperation(
                new MaterialStream(1000, new Ternary(0.3, 0.7, 0)),
                new MaterialStream(450, new Ternary(0, 0, 1)),
                298.15,
                [.. Enumerable.Repeat(0.9, stages)]),
            Holdup = new Holdup(450, 1800),
            RaffinateSoluteSpec = 0.085,
            Instruments = instruments,
            Labs = [new LabPoint(UnitStream.FinalRaffinate(stages), ComponentRole.Solute)],
        };

        Instrument Flow(string tag, UnitStream s, double sigma) =>
            new() { Tag = tag, Node = $"ns=2;s={tag}", Quantity = InstrumentQuantity.Flow, Stream = s, Unit = kgh, Sigma = sigma, RangeLow = 0, RangeHigh = 2500 };

        Instrument Analyzer(string tag, UnitStream s, ComponentRole c) =>
            new()
            {
                Tag = tag, Node = $"ns=2;s={tag}", Quantity = InstrumentQuantity.Fraction, Stream = s, Component = c, Unit = percent, Sigma = 0.05,
                RangeLow = 0, RangeHigh = 60, DeadTime = TimeSpan.FromMinutes(4), UpdateInterval = TimeSpan.FromMinutes(6),
            };
    }
}

using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Dynamics;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;

namespace Tieflow.Simulator.Tests;

/// <summary>
/// Plants built in code for the tests: the demo train X-300 of the Brackenmoor scenario (invented site and tags),
/// acetone from water into 1,1,2-trichloroethane on the published tie lines of config-samples/acetone-water-tce.system.json,
/// four counter-current stages at the operating point of config-samples/x300-countercurrent.case.json.
/// </summary>
internal static class TestPlants
{
    private static readonly Lazy<SystemFile> AcetoneSystem = new(() => SystemFileReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "acetone-water-tce.system.json")));

    public static SystemFile Acetone => AcetoneSystem.Value;

    public static MaterialStream Feed => new(1000, new Ternary(0.3, 0.7, 0));

    public static MaterialStream Solvent => new(450, new Ternary(0, 0, 1));

    /// <summary>The feed of the step change the dynamics tests start from: more feed, leaner in solute.</summary>
    public static MaterialStream SteppedFeed => new(1200, new Ternary(0.25, 0.75, 0));

    /// <summary>The unit's inputs at 25 degC with its nominal efficiencies, the demo feed and solvent unless given.</summary>
    public static UnitInputs NominalInputs(UnitDescription unit, MaterialStream? feed = null, MaterialStream? solvent = null)
    {
        ArgumentNullException.ThrowIfNull(unit);
        var inputs = new UnitInputs(unit.Stages) { Feed = feed ?? Feed, Solvent = solvent ?? Solvent, TemperatureKelvin = 298.15 };
        unit.Nominal.Efficiencies.ToArray().CopyTo(inputs.Efficiencies, 0);
        return inputs;
    }

    /// <summary>Runs the unit for whole seconds in steps of one second, then evaluates it at the end.</summary>
    public static void RunSeconds(UnitDynamics dynamics, UnitInputs inputs, int seconds)
    {
        ArgumentNullException.ThrowIfNull(dynamics);
        for (int s = 0; s < seconds; s++)
        {
            dynamics.Evaluate(inputs);
            dynamics.Advance(1);
        }

        dynamics.Evaluate(inputs);
    }

    public static double[] Efficiencies(int stages) => stages == 4 ? [0.92, 0.9, 0.9, 0.88] : Enumerable.Repeat(0.9, stages).ToArray();

    public static EngineeringUnit KgPerHour => new("kg/h", 1, 0);

    public static EngineeringUnit Percent => new("percent", 0.01, 0);

    public static EngineeringUnit Fraction => new("fraction", 1, 0);

    public static EngineeringUnit DegC => new("degC", 1, 273.15);

    /// <summary>Terminal flows, a raffinate analyzer per stage, water in the extract, solvent in the raffinate, a temperature.</summary>
    public static IReadOnlyList<Instrument> StandardInstruments(int stages)
    {
        var list = new List<Instrument>
        {
            Flow("FI-301", UnitStream.Feed, 8, 0, 2500),
            Flow("FI-302", UnitStream.Solvent, 4, 0, 1500),
            Flow("FI-303", UnitStream.FinalRaffinate(stages), 8, 0, 2500),
            Flow("FI-304", UnitStream.ExtractOf(1), 6, 0, 2500),
        };
        for (int n = 1; n <= stages; n++)
        {
            list.Add(new Instrument
            {
                Tag = $"AI-31{n}",
                Node = $"ns=2;s=X300.AI31{n}.PV",
                Quantity = InstrumentQuantity.Fraction,
                Stream = UnitStream.RaffinateOf(n),
                Component = ComponentRole.Solute,
                Unit = Percent,
                Sigma = 0.05,
                Resolution = 0.01,
                RangeLow = 0,
                RangeHigh = 50,
                DeadTime = TimeSpan.FromMinutes(4),
                UpdateInterval = TimeSpan.FromMinutes(6),
                UpdateOffset = TimeSpan.FromMinutes(n - 1),
            });
        }

        list.Add(new Instrument
        {
            Tag = "AI-320",
            Node = "ns=2;s=X300.AI320.PV",
            Quantity = InstrumentQuantity.Fraction,
            Stream = UnitStream.ExtractOf(1),
            Component = ComponentRole.Diluent,
            Unit = Percent,
            Sigma = 0.02,
            RangeLow = 0,
            RangeHigh = 20,
            DeadTime = TimeSpan.FromMinutes(2),
            UpdateInterval = TimeSpan.FromMinutes(2),
        });
        list.Add(new Instrument
        {
            Tag = "AI-321",
            Node = "ns=2;s=X300.AI321.PV",
            Quantity = InstrumentQuantity.Fraction,
            Stream = UnitStream.FinalRaffinate(stages),
            Component = ComponentRole.Solvent,
            Unit = Percent,
            Sigma = 0.01,
            RangeLow = 0,
            RangeHigh = 10,
            DeadTime = TimeSpan.FromMinutes(2),
            UpdateInterval = TimeSpan.FromMinutes(2),
        });
        list.Add(new Instrument
        {
            Tag = "TI-302",
            Node = "ns=2;s=X300.TI302.PV",
            Quantity = InstrumentQuantity.Temperature,
            Stage = Math.Min(2, stages),
            Unit = DegC,
            Sigma = 0.2,
            RangeLow = 0,
            RangeHigh = 100,
        });
        return list;
    }

    public static Instrument Flow(string tag, UnitStream stream, double sigma, double low, double high) => new()
    {
        Tag = tag,
        Node = $"ns=2;s=X300.{tag.Replace("-", string.Empty, StringComparison.Ordinal)}.PV",
        Quantity = InstrumentQuantity.Flow,
        Stream = stream,
        Unit = KgPerHour,
        Sigma = sigma,
        RangeLow = low,
        RangeHigh = high,
    };

    public static UnitDescription Train(
        int stages = 4,
        UnitKind kind = UnitKind.MixerSettler,
        CascadeArrangement arrangement = CascadeArrangement.Countercurrent,
        IReadOnlyList<Instrument>? instruments = null,
        Holdup? holdup = null,
        MaterialStream? solvent = null) => new()
        {
            Id = "X300",
            Kind = kind,
            SystemName = Acetone.Name,
            System = Acetone.System,
            Equilibrium = Acetone.Model,
            Arrangement = arrangement,
            Stages = stages,
            Nominal = new NominalOperation(Feed, solvent ?? Solvent, 298.15, Efficiencies(stages)),
            Holdup = holdup ?? new Holdup(450, 1800),
            RaffinateSoluteSpec = 0.02,
            ColumnHeightMetres = kind == UnitKind.Column ? 8.5 : null,
            Instruments = instruments ?? StandardInstruments(stages),
            Labs = [new LabPoint(UnitStream.FinalRaffinate(stages), ComponentRole.Solute), new LabPoint(UnitStream.ExtractOf(1), ComponentRole.Solute)],
        };

    public static Scenario Scenario(
        UnitDescription? unit = null,
        TimeSpan? duration = null,
        TimeSpan? step = null,
        int seed = 7,
        IReadOnlyList<Fault>? faults = null,
        IReadOnlyList<Disturbance>? disturbances = null,
        LabSchedule? lab = null) => new()
        {
            Plant = new PlantDescription("Brackenmoor", [unit ?? Train()]),
            Start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero),
            Duration = duration ?? TimeSpan.FromHours(2),
            Step = step ?? TimeSpan.FromSeconds(1),
            Seed = seed,
            Faults = faults ?? [],
            Disturbances = disturbances ?? [],
            Lab = lab,
        };
}

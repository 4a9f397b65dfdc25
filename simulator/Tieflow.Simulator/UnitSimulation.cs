using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Core.Dynamics;
using Tieflow.Simulator.Instruments;
using Tieflow.Simulator.Scenarios;
using Tieflow.Simulator.Truth;

namespace Tieflow.Simulator;

/// <summary>One unit of a simulated plant: its set values and faults over time, its dynamics, instruments, lab points and truth.</summary>
internal sealed class UnitSimulation
{
    private readonly SetPointSchedule _feedFlow;
    private readonly SetPointSchedule _feedSolute;
    private readonly SetPointSchedule _solventFlow;
    private readonly SetPointSchedule _temperature;
    private readonly EfficiencySchedule _efficiency;
    private readonly Fault[] _processFaults;
    private readonly Ternary _feedNominal;
    private readonly Ternary _solventComposition;
    private readonly InstrumentChannel[] _instruments;
    private readonly LabSampler? _labs;
    private readonly TruthSampler _truth;

    public UnitSimulation(UnitDescription unit, Scenario scenario, IReadOnlyList<Fault> faults, IReadOnlyList<Disturbance> disturbances, int firstInstrumentStream, int labStream)
    {
        Unit = unit;
        NominalOperation nominal = unit.Nominal;
        _feedNominal = nominal.Feed.Composition;
        _solventComposition = nominal.Solvent.Composition;
        _feedFlow = Schedule(nominal.Feed.Flow, DisturbanceKind.FeedFlow, disturbances);
        _feedSolute = Schedule(nominal.Feed.Composition.Solute, DisturbanceKind.FeedSolute, disturbances);
        _solventFlow = Schedule(nominal.Solvent.Flow, DisturbanceKind.SolventFlow, disturbances);
        _temperature = Schedule(nominal.TemperatureKelvin, DisturbanceKind.Temperature, disturbances);
        _efficiency = new EfficiencySchedule(nominal.Efficiencies, faults);
        _processFaults = faults.Where(f => f.Kind is FaultKind.Entrainment or FaultKind.SolventLoss).ToArray();
        Inputs = new UnitInputs(unit.Stages);

        // The train starts at the steady state of its operating point at the start, before any fault acts.
        var initial = new UnitInputs(unit.Stages);
        FillSetValues(initial, 0, out _);
        for (int k = 0; k < unit.Stages; k++)
        {
            initial.Efficiencies[k] = nominal.Efficiencies[k];
        }

        Dynamics = new UnitDynamics(unit, initial);
        _instruments = unit.Instruments.Select((i, n) => new InstrumentChannel(i, firstInstrumentStream + n, scenario.Seed, faults, scenario.Step)).ToArray();
        _labs = scenario.Lab is { } lab && unit.Labs.Count > 0 ? new LabSampler(unit, lab, scenario.Seed, labStream, scenario.Plant.Units.Count > 1) : null;
        _truth = new TruthSampler(unit);
        TruthFaults = faults.Select(f => new TruthFault(f.Kind, f.Stage, f.Tag, scenario.Start + f.Start, f.End is { } e ? scenario.Start + e : null)).ToArray();
    }

    public UnitDescription Unit { get; }

    public UnitDynamics Dynamics { get; }

    /// <summary>The inputs of the current step.</summary>
    public UnitInputs Inputs { get; }

    /// <summary>The set solvent flow (what the solvent meter sees), at the current step.</summary>
    public MaterialStream SolventSet { get; private set; }

    /// <summary>Solvent lost unmeasured before the unit, at the current step, flow units.</summary>
    public double SolventLossRate { get; private set; }

    public IReadOnlyList<TruthFault> TruthFaults { get; }

    /// <summary>Sets the inputs for the step at <paramref name="seconds"/> and evaluates the unit's streams.</summary>
    public void Prepare(double seconds)
    {
        FillSetValues(Inputs, seconds, out double solventSetFlow);
        _efficiency.Fill(seconds, Inputs.Efficiencies);
        Array.Clear(Inputs.Entrainment);
        double loss = 0;
        var elapsed = TimeSpan.FromSeconds(seconds);
        foreach (Fault f in _processFaults)
        {
            if (!f.IsActive(elapsed))
            {
                continue;
            }

            if (f.Kind == FaultKind.SolventLoss)
            {
                loss += f.Value;
            }
            else if (f.Stage is int stage)
            {
                Inputs.Entrainment[stage - 1] = f.Value;
                Inputs.Carried[stage - 1] = f.Carried;
            }
        }

        loss = Math.Clamp(loss, 0, 1);
        SolventSet = new MaterialStream(solventSetFlow, _solventComposition);
        SolventLossRate = loss * solventSetFlow * (Unit.Arrangement == CascadeArrangement.Crosscurrent ? Unit.Stages : 1);
        Inputs.Solvent = new MaterialStream((1 - loss) * solventSetFlow, _solventComposition);
        Dynamics.Evaluate(Inputs);
    }

    public void Emit(ISimulationSink sink, double seconds, DateTimeOffset time)
    {
        foreach (InstrumentChannel channel in _instruments)
        {
            sink.OnSample(Unit, channel.Instrument, channel.Sample(seconds, time, TrueValue(channel.Instrument)));
        }

        _labs?.Step(sink, seconds, time, this);
        if (_truth.Due(seconds))
        {
            sink.OnTruth(Unit, _truth.Sample(time, this));
        }
    }

    /// <summary>The true value (base unit) of what an instrument measures, at the current step.</summary>
    public double TrueValue(Instrument instrument) => instrument.Quantity switch
    {
        InstrumentQuantity.Flow => Stream(instrument.Stream!.Value).Flow,
        InstrumentQuantity.Fraction => Stream(instrument.Stream!.Value).Composition[instrument.Component!.Value],
        _ => Inputs.TemperatureKelvin,
    };

    /// <summary>A stream of the unit at the current step (the solvent as metered, before any loss).</summary>
    public MaterialStream Stream(UnitStream stream) => stream.Phase switch
    {
        StreamPhase.Feed => Inputs.Feed,
        StreamPhase.Solvent => SolventSet,
        StreamPhase.Raffinate => Dynamics.Raffinate(stream.Stage),
        _ => stream.Stage == 0 || stream == Unit.FinalExtract ? Dynamics.FinalExtract : Dynamics.Extract(stream.Stage),
    };

    private void FillSetValues(UnitInputs inputs, double seconds, out double solventFlow)
    {
        double solute = _feedSolute.At(seconds);
        var feed = new Ternary(solute, Math.Max(1 - solute - _feedNominal.Solvent, 0), _feedNominal.Solvent);
        inputs.Feed = new MaterialStream(_feedFlow.At(seconds), feed);
        solventFlow = _solventFlow.At(seconds);
        inputs.Solvent = new MaterialStream(solventFlow, _solventComposition);
        inputs.TemperatureKelvin = _temperature.At(seconds);
    }

    private static SetPointSchedule Schedule(double nominal, DisturbanceKind kind, IReadOnlyList<Disturbance> disturbances) =>
        new(nominal, disturbances.Where(d => d.Kind == kind));
}

using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Dynamics;

/// <summary>
/// The dynamic model of one unit: N stages, each a mixer followed by a settler, connected counter-current or
/// cross-current; a column is the same chain of theoretical stages.
/// </summary>
/// <remarks>
/// <para>Model, and why. Each mixer is a well-mixed tank of constant hold-up H_m (kg): its component inventory M obeys
/// dM/dt = (inlets) - (phases sent to the settler), and it sends its contents out as the two phases of the Murphree
/// split of its own composition z = M / |M| relative to the raffinate now entering (see <see cref="MurphreeSplitter"/>):
/// both phases on the envelope, x_out = x_in - E (x_in - x*), flows by the lever rule. At steady state z equals the
/// mixed inlets, so the stage is then exactly the cascade solver's Murphree stage, and the whole train settles on the
/// cascade solver's answer for the same inputs. Each settler holds two layers of constant hold-up (the settler hold-up
/// split between the phases in proportion to their design flows), each well mixed: a first-order lag of time constant
/// layer hold-up over phase flow, which is how a settler delays and smooths what the mixer sends. The response of a
/// stage thus has the time constants hold-up over throughput that the plant file's hold-ups imply.</para>
/// <para>Hydraulics are instantaneous (level control keeps every hold-up constant): each tank sends out what it
/// receives. The phase shares of every stage are known from compositions alone, so the flows of the whole train at
/// an instant follow from one tridiagonal linear system (counter-current) or a forward sweep (cross-current).</para>
/// <para>Entrainment moves carried-over phase between a stage's two outlets: the leaving extract carries a mass
/// fraction f of raffinate-layer liquid (or the raffinate carries extract-layer liquid); the stage's total outflow
/// is unchanged, so every balance still closes.</para>
/// <para>Integration: explicit Euler on the inventories with the flows of the start of the step, which conserves
/// every component exactly (what leaves one tank is what the next receives); a step is divided when it exceeds half
/// the shortest time constant, so that the scheme stays stable and smooth for small hold-ups.</para>
/// <para>Temperature moves the equilibrium of activity-model systems (NRTL, UNIQUAC): their envelope is evaluated at
/// the stage temperature, to 0.01 K so that a slow ramp does not rebuild it every step. Tie-line and distribution data
/// hold at one temperature and are always read at the unit's design temperature.</para>
/// </remarks>
public sealed class UnitDynamics
{
    private const double TemperatureQuantumKelvin = 0.01;
    private const int MaxSubsteps = 10_000;

    private readonly IPhaseEquilibrium _model;
    private readonly bool _temperatureDependent;
    private readonly double _referenceTemperature;
    private readonly int _n;
    private readonly bool _countercurrent;
    private readonly CascadeArrangement _arrangement;
    private readonly double _mixerHoldup;
    private readonly double[] _raffinateLayer;
    private readonly double[] _extractLayer;

    private readonly Ternary[] _mixer;
    private readonly Ternary[] _settlerRaffinate;
    private readonly Ternary[] _settlerExtract;
    private readonly double[] _warmY;
    private readonly double[] _slope;

    private readonly MurphreeSplit[] _split;
    private readonly Ternary[] _layerRaffinate;
    private readonly Ternary[] _layerExtract;
    private readonly double[] _mixerFlow;
    private readonly double[] _raffinateShare;
    private readonly double[] _extractShare;
    private readonly MaterialStream[] _raffinateOut;
    private readonly MaterialStream[] _extractOut;
    private readonly double[] _lower;
    private readonly double[] _upper;
    private readonly double[] _rhs;
    private Envelope _envelope;
    private UnitInputs? _evaluatedFor;

    /// <summary>Creates the model at the steady state of <paramref name="initial"/> (solved by the cascade solver).</summary>
    /// <exception cref="CascadeException">The initial operating point cannot be solved.</exception>
    public UnitDynamics(UnitDescription unit, UnitInputs initial)
    {
        ArgumentNullException.ThrowIfNull(unit);
        ArgumentNullException.ThrowIfNull(initial);
        _model = unit.Equilibrium;
        _temperatureDependent = _model is ActivityCoefficientModel;
        _referenceTemperature = unit.Nominal.TemperatureKelvin;
        _n = unit.Stages;
        _countercurrent = unit.Arrangement == CascadeArrangement.Countercurrent;
        _mixerHoldup = unit.Holdup.MixerKg;
        _raffinateLayer = new double[_n];
        _extractLayer = new double[_n];
        _mixer = new Ternary[_n];
        _settlerRaffinate = new Ternary[_n];
        _settlerExtract = new Ternary[_n];
        _warmY = new double[_n];
        _slope = new double[_n];
        _split = new MurphreeSplit[_n];
        _layerRaffinate = new Ternary[_n];
        _layerExtract = new Ternary[_n];
        _mixerFlow = new double[_n];
        _raffinateShare = new double[_n];
        _extractShare = new double[_n];
        _raffinateOut = new MaterialStream[_n];
        _extractOut = new MaterialStream[_n];
        _lower = new double[_n];
        _upper = new double[_n];
        _rhs = new double[_n];

        _arrangement = unit.Arrangement;
        double t = ModelTemperature(initial.TemperatureKelvin);
        _envelope = new Envelope(_model, t);
        CascadeResult steady = new CascadeSolver(_model, t).Solve(unit.Arrangement, initial.Feed, initial.Solvent, initial.Efficiencies);
        for (int k = 0; k < _n; k++)
        {
            StageResult s = steady.Stages[k];
            double l = s.Raffinate.Flow, v = s.Extract.Flow;
            _raffinateLayer[k] = unit.Holdup.SettlerKg * l / (l + v);
            _extractLayer[k] = unit.Holdup.SettlerKg * v / (l + v);
        }

        SetInventories(steady);
        InitialCascade = steady;
    }

    /// <summary>
    /// Puts the model at the steady state of <paramref name="inputs"/> (solved by the cascade solver), the settler layers
    /// keeping the sizes they were given at construction. Evaluate before reading streams.
    /// </summary>
    /// <exception cref="CascadeException">The operating point cannot be solved.</exception>
    public void Settle(UnitInputs inputs)
    {
        ArgumentNullException.ThrowIfNull(inputs);
        double t = ModelTemperature(inputs.TemperatureKelvin);
        if (t != _envelope.TemperatureKelvin)
        {
            _envelope = new Envelope(_model, t);
        }

        SetInventories(new CascadeSolver(_model, t).Solve(_arrangement, inputs.Feed, inputs.Solvent, inputs.Efficiencies));
        Array.Clear(_slope);
        _evaluatedFor = null;
    }

    private void SetInventories(CascadeResult steady)
    {
        for (int k = 0; k < _n; k++)
        {
            StageResult s = steady.Stages[k];
            Ternary mixed = s.Raffinate.ComponentFlows + s.Extract.ComponentFlows;
            _mixer[k] = (_mixerHoldup / mixed.Sum) * mixed;
            _settlerRaffinate[k] = _raffinateLayer[k] * s.Raffinate.Composition;
            _settlerExtract[k] = _extractLayer[k] * s.Extract.Composition;
            _warmY[k] = s.Extract.Composition.Solute;
        }
    }

    /// <summary>Number of stages.</summary>
    public int Stages => _n;

    /// <summary>The cascade solver's steady state the model started from.</summary>
    public CascadeResult InitialCascade { get; }

    /// <summary>Raffinate leaving stage <paramref name="stage"/> (1-based) at the last evaluation.</summary>
    public MaterialStream Raffinate(int stage) => _raffinateOut[stage - 1];

    /// <summary>Extract leaving stage <paramref name="stage"/> (1-based) at the last evaluation.</summary>
    public MaterialStream Extract(int stage) => _extractOut[stage - 1];

    /// <summary>The final raffinate (leaving stage N).</summary>
    public MaterialStream FinalRaffinate => _raffinateOut[_n - 1];

    /// <summary>The extract product: leaving stage 1 (counter-current) or all stages' extracts combined (cross-current).</summary>
    public MaterialStream FinalExtract
    {
        get
        {
            if (_countercurrent)
            {
                return _extractOut[0];
            }

            Ternary sum = default;
            for (int k = 0; k < _n; k++)
            {
                sum += _extractOut[k].ComponentFlows;
            }

            return MaterialStream.FromComponentFlows(sum);
        }
    }

    /// <summary>The mixer split of stage <paramref name="stage"/> at the last evaluation.</summary>
    public MurphreeSplit MixerSplit(int stage) => _split[stage - 1];

    /// <summary>Component inventory of a stage (mixer and both settler layers), kg (kmol on a mole basis).</summary>
    public Ternary StageInventory(int stage) => _mixer[stage - 1] + _settlerRaffinate[stage - 1] + _settlerExtract[stage - 1];

    /// <summary>Component flows entering stage <paramref name="stage"/> at the last evaluation, per hour.</summary>
    public Ternary StageInflow(int stage, UnitInputs inputs)
    {
        int k = stage - 1;
        Ternary raffinateSide = k == 0 ? inputs.Feed.ComponentFlows : _raffinateOut[k - 1].ComponentFlows;
        Ternary extractSide = !_countercurrent || k == _n - 1 ? inputs.Solvent.ComponentFlows : _extractOut[k + 1].ComponentFlows;
        return raffinateSide + extractSide;
    }

    /// <summary>Component flows leaving stage <paramref name="stage"/> at the last evaluation, per hour.</summary>
    public Ternary StageOutflow(int stage) => _raffinateOut[stage - 1].ComponentFlows + _extractOut[stage - 1].ComponentFlows;

    /// <summary>
    /// Takes over the state (every hold-up's inventory and the splitter's warm starts) of another model of the same unit,
    /// so that a trajectory can be run again from it with other inputs. Evaluate before reading streams.
    /// </summary>
    /// <exception cref="ArgumentException">The other model has another number of stages.</exception>
    public void CopyStateFrom(UnitDynamics other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (other._n != _n || other._countercurrent != _countercurrent)
        {
            throw new ArgumentException($"The model to copy from has {other._n} stages ({(other._countercurrent ? "counter" : "cross")}-current); this one {_n} ({(_countercurrent ? "counter" : "cross")}-current).", nameof(other));
        }

        other._mixer.CopyTo(_mixer, 0);
        other._settlerRaffinate.CopyTo(_settlerRaffinate, 0);
        other._settlerExtract.CopyTo(_settlerExtract, 0);
        other._raffinateLayer.CopyTo(_raffinateLayer, 0);
        other._extractLayer.CopyTo(_extractLayer, 0);
        other._warmY.CopyTo(_warmY, 0);
        other._slope.CopyTo(_slope, 0);
        _envelope = other._envelope;
        _evaluatedFor = null;
    }

    /// <summary>
    /// The extract solute fraction each stage's next split starts from: the last split's, unless the caller puts a
    /// better guess here (a trajectory run again with slightly other inputs knows roughly where each split will land).
    /// Only the number of secant steps depends on it; the answer is the split's, within the splitter's tolerance.
    /// </summary>
    internal Span<double> SplitStarts => _warmY;

    /// <summary>Computes every stream of the unit at the current state for these inputs.</summary>
    /// <exception cref="SimulationException">A stage has become one liquid phase or left the equilibrium data.</exception>
    public void Evaluate(UnitInputs inputs)
    {
        double t = ModelTemperature(inputs.TemperatureKelvin);
        if (t != _envelope.TemperatureKelvin)
        {
            _envelope = new Envelope(_model, t);
            Array.Clear(_slope);
        }

        // Compositions and phase shares, stage by stage from the feed end: a stage's entering raffinate is the
        // previous stage's leaving raffinate, whose composition needs no flows.
        Ternary raffinateIn = inputs.Feed.Composition;
        for (int k = 0; k < _n; k++)
        {
            Ternary z = (1 / _mixer[k].Sum) * _mixer[k];
            MurphreeSplit split = MurphreeSplitter.Split(_envelope, z, raffinateIn.Solute, inputs.Efficiencies[k], _warmY[k], ref _slope[k], k + 1);
            _split[k] = split;
            _warmY[k] = split.ExtractSolute;
            _layerRaffinate[k] = _raffinateLayer[k] > 0 ? (1 / _settlerRaffinate[k].Sum) * _settlerRaffinate[k] : split.Raffinate;
            _layerExtract[k] = _extractLayer[k] > 0 ? (1 / _settlerExtract[k].Sum) * _settlerExtract[k] : split.Extract;

            double beta = split.ExtractShare;
            double f = inputs.Entrainment[k];
            double raffinateShare = 1 - beta, extractShare = beta;
            Ternary rOut = _layerRaffinate[k], eOut = _layerExtract[k];
            if (f > 0)
            {
                if (inputs.Carried[k] == EntrainedPhase.Raffinate)
                {
                    // The extract leaving carries raffinate-layer liquid: carried / (extract + carried) = f.
                    double carried = Math.Min(f * beta / (1 - f), raffinateShare);
                    double fraction = carried / (beta + carried);
                    eOut = ((1 - fraction) * _layerExtract[k]) + (fraction * _layerRaffinate[k]);
                    raffinateShare -= carried;
                    extractShare += carried;
                }
                else
                {
                    double carried = Math.Min(f * (1 - beta) / (1 - f), extractShare);
                    double fraction = carried / ((1 - beta) + carried);
                    rOut = ((1 - fraction) * _layerRaffinate[k]) + (fraction * _layerExtract[k]);
                    raffinateShare += carried;
                    extractShare -= carried;
                }
            }

            _raffinateShare[k] = raffinateShare;
            _extractShare[k] = extractShare;
            _raffinateOut[k] = new MaterialStream(0, rOut);
            _extractOut[k] = new MaterialStream(0, eOut);
            raffinateIn = rOut;
        }

        SolveFlows(inputs.Feed.Flow, inputs.Solvent.Flow);
        for (int k = 0; k < _n; k++)
        {
            _raffinateOut[k] = new MaterialStream(_raffinateShare[k] * _mixerFlow[k], _raffinateOut[k].Composition);
            _extractOut[k] = new MaterialStream(_extractShare[k] * _mixerFlow[k], _extractOut[k].Composition);
        }

        _evaluatedFor = inputs;
    }

    /// <summary>
    /// Moves the state on by <paramref name="seconds"/> with the inputs of the last <see cref="Evaluate"/>; evaluate
    /// again (with the next step's inputs) before reading streams.
    /// </summary>
    public void Advance(double seconds)
    {
        UnitInputs inputs = _evaluatedFor ?? throw new InvalidOperationException("Evaluate the unit before advancing it.");
        int substeps = Substeps(seconds);
        double hours = seconds / 3600.0 / substeps;
        for (int s = 0; s < substeps; s++)
        {
            if (s > 0)
            {
                Evaluate(inputs);
            }

            Integrate(inputs, hours);
        }

        _evaluatedFor = null;
    }

    private void Integrate(UnitInputs inputs, double hours)
    {
        for (int k = 0; k < _n; k++)
        {
            MurphreeSplit split = _split[k];
            double f = _mixerFlow[k];
            double l = (1 - split.ExtractShare) * f, v = split.ExtractShare * f;
            Ternary toSettlerRaffinate = l * split.Raffinate;
            Ternary toSettlerExtract = v * split.Extract;
            _mixer[k] += hours * (StageInflow(k + 1, inputs) - toSettlerRaffinate - toSettlerExtract);
            if (_raffinateLayer[k] > 0)
            {
                _settlerRaffinate[k] += hours * (toSettlerRaffinate - (l * _layerRaffinate[k]));
            }

            if (_extractLayer[k] > 0)
            {
                _settlerExtract[k] += hours * (toSettlerExtract - (v * _layerExtract[k]));
            }
        }
    }

    private int Substeps(double seconds)
    {
        double shortest = double.PositiveInfinity;
        for (int k = 0; k < _n; k++)
        {
            double f = _mixerFlow[k];
            if (!(f > 0))
            {
                continue;
            }

            double l = (1 - _split[k].ExtractShare) * f, v = _split[k].ExtractShare * f;
            shortest = Math.Min(shortest, _mixerHoldup / f);
            if (_raffinateLayer[k] > 0 && l > 0)
            {
                shortest = Math.Min(shortest, _raffinateLayer[k] / l);
            }

            if (_extractLayer[k] > 0 && v > 0)
            {
                shortest = Math.Min(shortest, _extractLayer[k] / v);
            }
        }

        double hours = seconds / 3600.0;
        return double.IsFinite(shortest) ? Math.Clamp((int)Math.Ceiling(hours / (0.5 * shortest)), 1, MaxSubsteps) : 1;
    }

    /// <summary>
    /// Total flow through each mixer: F_n = (raffinate from n-1) + (extract from n+1) + feed or solvent, with the
    /// raffinate and extract of stage n the shares a_n F_n and b_n F_n of its throughput.
    /// </summary>
    private void SolveFlows(double feed, double solvent)
    {
        if (!_countercurrent)
        {
            double previous = 0;
            for (int k = 0; k < _n; k++)
            {
                _mixerFlow[k] = (k == 0 ? feed : _raffinateShare[k - 1] * previous) + solvent;
                previous = _mixerFlow[k];
            }

            return;
        }

        // Tridiagonal system: F_k - a_(k-1) F_(k-1) - b_(k+1) F_(k+1) = source_k; the Thomas algorithm, O(N).
        for (int k = 0; k < _n; k++)
        {
            _lower[k] = k > 0 ? -_raffinateShare[k - 1] : 0;
            _upper[k] = k < _n - 1 ? -_extractShare[k + 1] : 0;
            _rhs[k] = (k == 0 ? feed : 0) + (k == _n - 1 ? solvent : 0);
        }

        double[] c = _upper, d = _rhs;
        c[0] /= 1.0;
        for (int k = 1; k < _n; k++)
        {
            double m = 1.0 - (_lower[k] * c[k - 1]);
            c[k] /= m;
            d[k] = (d[k] - (_lower[k] * d[k - 1])) / m;
        }

        _mixerFlow[_n - 1] = d[_n - 1];
        for (int k = _n - 2; k >= 0; k--)
        {
            _mixerFlow[k] = d[k] - (c[k] * _mixerFlow[k + 1]);
        }
    }

    private double ModelTemperature(double temperatureKelvin) =>
        _temperatureDependent ? Math.Round(temperatureKelvin / TemperatureQuantumKelvin) * TemperatureQuantumKelvin : _referenceTemperature;
}

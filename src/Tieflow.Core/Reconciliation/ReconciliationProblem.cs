using MathNet.Numerics.Distributions;

namespace Tieflow.Core.Reconciliation;

/// <summary>
/// A reconciliation prepared for one network and one set of measured quantities with their standard deviations.
/// <para>
/// Minimises the weighted sum of squared adjustments of the measurements subject to the balances: total flow per
/// node for a flow-only network (linear), or one balance per node and component plus fractions summing to one per
/// stream (bilinear in flow times fraction), with every flow at or above zero and every fraction in [0, 1]. The
/// unmeasured quantities are projected out of the linearised balances with a column-pivoted Householder QR
/// factorisation (the QR form of Crowe's projection); the bilinear problem is solved by successive linearisation
/// until the balances close. The projection also classifies the quantities (redundant, non-redundant, observable,
/// unobservable) and gives the linearised covariance of every estimate.
/// </para>
/// <para>
/// Bounds: when the optimum without bounds leaves them, the bounded problem is solved by a primal active-set method
/// on the reduced problem (Nocedal and Wright, Numerical Optimization, 2nd ed., Springer 2006, section 16.5; Lawson
/// and Hanson, Solving Least Squares Problems, Prentice-Hall 1974, chapter 23): a bound in the working set holds its
/// quantity at the bound, the blocking bound of the step from the last point inside the bounds joins the set, and a
/// bound whose multiplier says the optimum lies inside leaves it. Active bounds are reported per estimate and in
/// <see cref="ReconciliationResult.ActiveBounds"/>.
/// </para>
/// <para>
/// Extreme sigmas: a sigma of at least <see cref="NoInformationRatio"/> times the scale of its quantity (the largest
/// flow reading for a flow, one for a fraction) carries no information and the reading is reconciled as unmeasured
/// (its estimate comes from the balances); a sigma of at most <see cref="ExactRatio"/> times that scale is an exactly
/// known value, held as read. The classification follows from that.
/// </para>
/// <para>
/// Prepare once and call <see cref="Reconcile(ReadOnlySpan{double})"/> with new readings: a flow-only problem then
/// costs a few matrix-vector products. An instance keeps its workspace and is not safe for concurrent use.
/// </para>
/// </summary>
public sealed class ReconciliationProblem
{
    /// <summary>A sigma at least this many times the scale of its quantity makes the reading carry no information.</summary>
    public const double NoInformationRatio = 1e6;

    /// <summary>A sigma at most this many times the scale of its quantity makes the reading exactly known.</summary>
    public const double ExactRatio = 1e-8;

    // A bound counts as left when a value is beyond it by more than this (flows relative to the flow scale).
    private const double BoundTolerance = 1e-9;

    private readonly ProcessNetwork _network;
    private readonly ReconciliationOptions _options;
    private readonly QuantityKey[] _keys;
    private readonly int[] _variableOf;
    private readonly int[] _measurementOf;
    private readonly bool[] _isFlow;
    private readonly double[] _sigma;
    private readonly double[] _initialValues;
    private readonly double[] _readings;
    private readonly MeasurementRole[] _roles;
    private readonly Dictionary<string, ReconciliationSolver> _layouts = new(StringComparer.Ordinal);
    private readonly Dictionary<int, double> _chiSquareCritical = [];
    private readonly Dictionary<int, double> _lastWorking = [];
    private readonly Dictionary<int, double> _sidakCritical = [];
    private readonly char[] _layoutKey;
    private readonly double[] _engineReadings;
    private readonly int _n;
    private readonly int _gauge;
    private bool _gauged;
    private ReconciliationSolver? _plainSolver;
    private List<int>? _plainMeasured;
    private List<int>? _plainHeld;
    private readonly MeasurementRole[] _plainRoles;

    // Known accumulation per balance row (node x component), or null for steady state. Replaced, never changed in
    // place: the solver sees a new array as new balances.
    private double[]? _accumulation;

    private ReconciliationProblem(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions options, double[]? accumulation)
    {
        _network = network;
        _accumulation = accumulation;
        _options = options;
        _n = network.QuantityCount;
        int nx = measurements.Count;
        _keys = new QuantityKey[nx];
        _variableOf = new int[nx];
        _isFlow = new bool[nx];
        _sigma = new double[nx];
        _initialValues = new double[nx];
        _readings = new double[nx];
        _roles = new MeasurementRole[nx];
        _plainRoles = new MeasurementRole[nx];
        _measurementOf = new int[_n];
        Array.Fill(_measurementOf, -1);
        _layoutKey = new char[_n];
        _engineReadings = new double[nx];
        for (int i = 0; i < nx; i++)
        {
            Measurement meas = measurements[i];
            _keys[i] = meas.Key;
            _variableOf[i] = network.IndexOf(meas.Key);
            _measurementOf[_variableOf[i]] = i;
            _isFlow[i] = meas.Key.Quantity == MeasuredQuantity.Flow;
            _sigma[i] = meas.Sigma;
            _initialValues[i] = meas.Value;
        }

        // The flow that fixes the scale when no flow is measured (the first stream entering the network).
        int feed = 0;
        for (int s = network.Streams.Count - 1; s >= 0; s--)
        {
            if (network.Streams[s].From is null)
            {
                feed = s;
            }
        }

        _gauge = feed * (network.Components.Count + 1);
    }

    private enum MeasurementRole
    {
        Adjusted,
        Exact,
        NoInformation,
    }

    /// <summary>The network reconciled.</summary>
    public ProcessNetwork Network => _network;

    /// <summary>The measured quantities, in the order their values are expected.</summary>
    public IReadOnlyList<QuantityKey> MeasuredQuantities => _keys;

    /// <summary>The settings used.</summary>
    public ReconciliationOptions Options => _options;

    /// <summary>Whether any layout prepared so far takes its steps on the band (for the tests).</summary>
    internal bool UsesBand => _layouts.Values.Any(l => l.UsesBand);

    /// <summary>Whether any layout closed its last solve on the band (classification and covariance from the band; for the tests).</summary>
    internal bool ClosedOnBand => _layouts.Values.Any(l => l.ClosedOnBand);

    /// <summary>
    /// Prepares a reconciliation. The measurements fix which quantities are measured and their standard deviations;
    /// their values are the default readings of <see cref="Reconcile()"/>.
    /// </summary>
    /// <param name="network">The network.</param>
    /// <param name="measurements">At most one measurement per quantity; fractions only of declared components. A flow
    /// reading below zero is allowed (a meter near zero flow) and reconciled to a flow at or above zero.</param>
    /// <param name="options">Settings; <see cref="ReconciliationOptions.Default"/> when <see langword="null"/>.</param>
    /// <exception cref="ArgumentException">A measurement names an unknown stream or component, repeats a quantity,
    /// measures a fraction of a flow-only network, has a sigma that is not above zero, a value that is not finite,
    /// or a fraction outside [0, 1], or an accumulation names an unknown node or component or is not finite. The message
    /// names the measurement or the accumulation.</exception>
    public static ReconciliationProblem Create(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions? options = null)
        => Create(network, measurements, options, null);

    /// <summary>
    /// Prepares a reconciliation of a unit that is not at steady state: each node's balance holds the known rate at
    /// which its hold-up gains each component (inflow - outflow = accumulation). With no flow measured the flows are
    /// only known up to a scale, and the accumulation is then not applied.
    /// </summary>
    /// <param name="network">The network.</param>
    /// <param name="measurements">As for <see cref="Create(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?)"/>.</param>
    /// <param name="options">Settings; <see cref="ReconciliationOptions.Default"/> when <see langword="null"/>.</param>
    /// <param name="accumulation">At most one rate per node and component; <see langword="null"/> or empty for steady state.</param>
    /// <exception cref="ArgumentException">A measurement is invalid, or an accumulation names an unknown node or component,
    /// repeats one, or is not finite. The message names it.</exception>
    public static ReconciliationProblem Create(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions? options, IReadOnlyList<NodeAccumulation>? accumulation)
    {
        ArgumentNullException.ThrowIfNull(network);
        ArgumentNullException.ThrowIfNull(measurements);
        options ??= ReconciliationOptions.Default;
        options.Validate();
        var seen = new HashSet<int>();
        for (int i = 0; i < measurements.Count; i++)
        {
            Measurement m = measurements[i];
            string where = $"Measurement {i} ({m.Key})";
            if (m.Key.Stream is null || network.IndexOfStream(m.Key.Stream) < 0)
            {
                throw new ArgumentException($"{where} names an unknown stream.", nameof(measurements));
            }

            if (m.Key.Quantity == MeasuredQuantity.Fraction)
            {
                if (network.IsFlowOnly)
                {
                    throw new ArgumentException($"{where} is a fraction, but the network has no components.", nameof(measurements));
                }

                if (m.Key.Component is null || network.IndexOfComponent(m.Key.Component) < 0)
                {
                    throw new ArgumentException($"{where} names a component that is not declared.", nameof(measurements));
                }

                if (!(m.Value >= 0 && m.Value <= 1))
                {
                    throw new ArgumentException($"{where} has the value {m.Value}; expected a fraction in [0, 1].", nameof(measurements));
                }
            }
            else if (!double.IsFinite(m.Value))
            {
                throw new ArgumentException($"{where} has the value {m.Value}; expected a finite number.", nameof(measurements));
            }

            if (!(m.Sigma > 0) || !double.IsFinite(m.Sigma))
            {
                throw new ArgumentException($"{where} has the sigma {m.Sigma}; expected a finite number above zero.", nameof(measurements));
            }

            if (!seen.Add(network.IndexOf(m.Key)))
            {
                throw new ArgumentException($"{where} measures a quantity that is already measured.", nameof(measurements));
            }
        }

        return new ReconciliationProblem(network, measurements, options, AccumulationRows(network, accumulation));
    }

    private static double[]? AccumulationRows(ProcessNetwork network, IReadOnlyList<NodeAccumulation>? accumulation)
    {
        if (accumulation is null || accumulation.Count == 0)
        {
            return null;
        }

        int nc = network.Components.Count;
        var rows = new double[network.Nodes.Count * Math.Max(nc, 1)];
        var seen = new HashSet<int>();
        for (int i = 0; i < accumulation.Count; i++)
        {
            NodeAccumulation a = accumulation[i];
            string where = $"Accumulation {i} (node '{a.Node}', component '{a.Component}')";
            int node = a.Node is null ? -1 : network.IndexOfNode(a.Node);
            if (node < 0)
            {
                throw new ArgumentException($"{where} names an unknown node.", nameof(accumulation));
            }

            int c = 0;
            if (nc > 0)
            {
                c = a.Component is null ? -1 : network.IndexOfComponent(a.Component);
                if (c < 0)
                {
                    throw new ArgumentException($"{where} names a component that is not declared.", nameof(accumulation));
                }
            }
            else if (a.Component is not null)
            {
                throw new ArgumentException($"{where} names a component, but the network has no components.", nameof(accumulation));
            }

            if (!double.IsFinite(a.Rate))
            {
                throw new ArgumentException($"{where} has the rate {a.Rate}; expected a finite number.", nameof(accumulation));
            }

            if (!seen.Add((node * Math.Max(nc, 1)) + c))
            {
                throw new ArgumentException($"{where} repeats an accumulation already given.", nameof(accumulation));
            }

            rows[(node * Math.Max(nc, 1)) + c] = a.Rate;
        }

        return rows;
    }

    /// <summary>
    /// Replaces the known accumulation of the nodes (see <see cref="Create(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?, IReadOnlyList{NodeAccumulation}?)"/>)
    /// for the reconciliations that follow: a monitor whose hold-ups settle at another rate in every window keeps its
    /// prepared problem.
    /// </summary>
    /// <param name="accumulation">At most one rate per node and component; <see langword="null"/> or empty for steady state.</param>
    /// <exception cref="ArgumentException">An accumulation names an unknown node or component, repeats one, or is not finite.</exception>
    public void SetAccumulation(IReadOnlyList<NodeAccumulation>? accumulation) => _accumulation = AccumulationRows(_network, accumulation);

    /// <summary>Reconciles the readings given at preparation.</summary>
    /// <exception cref="ReconciliationException">The data could not be reconciled (see <see cref="ReconciliationStatus"/>).</exception>
    public ReconciliationResult Reconcile() => Reconcile(_initialValues);

    /// <summary>Reconciles new readings of the measured quantities, in the order of <see cref="MeasuredQuantities"/>.</summary>
    /// <exception cref="ArgumentException">The number of values differs from the number of measured quantities, or a value is
    /// not finite, or a fraction is outside [0, 1].</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge (the message says after how many
    /// iterations and what the residual was), or the data cannot be reconciled within the bounds (the message says why).</exception>
    public ReconciliationResult Reconcile(ReadOnlySpan<double> values)
    {
        ReconciliationResult result = ReconcileCore(values);
        return result.Succeeded ? result : throw new ReconciliationException(result.Message!);
    }

    /// <summary>
    /// Reconciles new readings with new standard deviations (for example sigmas relative to the readings), both in the
    /// order of <see cref="MeasuredQuantities"/>. A flow-only problem factorises again only when a sigma changed.
    /// </summary>
    /// <exception cref="ArgumentException">A length differs from the number of measured quantities, a value is not finite,
    /// or a sigma is not a finite number above zero.</exception>
    /// <exception cref="ReconciliationException">The data could not be reconciled (see <see cref="ReconciliationStatus"/>).</exception>
    public ReconciliationResult Reconcile(ReadOnlySpan<double> values, ReadOnlySpan<double> sigmas)
    {
        SetSigmas(sigmas);
        return Reconcile(values);
    }

    /// <summary>
    /// Reconciles new readings; returns <see langword="false"/> instead of throwing when they cannot be reconciled, with a
    /// result whose <see cref="ReconciliationResult.Status"/> says why and whose <see cref="ReconciliationResult.Message"/>
    /// says what to change (its estimates then have no value).
    /// </summary>
    /// <exception cref="ArgumentException">The number of values differs from the number of measured quantities, or a value is not finite.</exception>
    public bool TryReconcile(ReadOnlySpan<double> values, out ReconciliationResult result)
    {
        result = ReconcileCore(values);
        return result.Succeeded;
    }

    private void SetSigmas(ReadOnlySpan<double> sigmas)
    {
        Preconditions.SameLength(sigmas.Length, _keys.Length);
        for (int i = 0; i < _keys.Length; i++)
        {
            double sigma = sigmas[i];
            if (!(sigma > 0) || !double.IsFinite(sigma))
            {
                throw new ArgumentException($"The sigma of {_keys[i]} is {sigma}; expected a finite number above zero.", nameof(sigmas));
            }
        }

        sigmas.CopyTo(_sigma);
    }

    private ReconciliationResult ReconcileCore(ReadOnlySpan<double> values)
    {
        int nx = _keys.Length;
        Preconditions.SameLength(values.Length, nx);
        double flowScale = 0;
        for (int i = 0; i < nx; i++)
        {
            double value = values[i];
            if (!double.IsFinite(value))
            {
                throw new ArgumentException($"The value of {_keys[i]} is {value}; expected a finite number.", nameof(values));
            }

            if (!_isFlow[i] && !(value >= 0 && value <= 1))
            {
                throw new ArgumentException($"The value of {_keys[i]} is {value}; expected a fraction in [0, 1].", nameof(values));
            }

            if (_isFlow[i])
            {
                flowScale = Math.Max(flowScale, Math.Abs(value));
            }
        }

        values.CopyTo(_readings);
        flowScale = flowScale > 0 ? flowScale : 1;
        for (int i = 0; i < nx; i++)
        {
            double ratio = _sigma[i] / (_isFlow[i] ? flowScale : 1);
            _roles[i] = ratio >= NoInformationRatio ? MeasurementRole.NoInformation
                : ratio <= ExactRatio ? MeasurementRole.Exact
                : MeasurementRole.Adjusted;
            if (_roles[i] == MeasurementRole.Exact && _isFlow[i] && _readings[i] < 0)
            {
                return Failure(
                    ReconciliationStatus.Infeasible,
                    $"{_keys[i]} is given as exactly known (sigma {_sigma[i]:G3}) at {_readings[i]:G6}, below zero: no flow can be negative. " +
                    "Check the reading, or give it a sigma.");
            }
        }

        // Without a flow reading the balances fix the flows only up to a common factor, and zero flows would satisfy
        // them with no adjustment at all: the scale is fixed by holding one flow at one, the compositions are reconciled
        // at that scale, and every flow is reported unobservable.
        _gauged = !_network.IsFlowOnly;
        for (int i = 0; i < nx && _gauged; i++)
        {
            _gauged = !(_isFlow[i] && _roles[i] != MeasurementRole.NoInformation);
        }

        if (_lastWorking.Count > 0)
        {
            // Should the last solution's bounds lead nowhere (a failure an empty start might not meet), start empty.
            ReconciliationResult warm = SolveWithinBounds(flowScale, warm: true);
            if (warm.Succeeded)
            {
                return warm;
            }
        }

        return SolveWithinBounds(flowScale, warm: false);
    }

    // The primal active-set method: the working set holds quantities at a bound (0 for a flow or a fraction, 1 for a
    // fraction). Each pass solves the reconciliation with the working set held; a solution outside the bounds adds its
    // blocking bound, a solution inside adds nothing and releases the bound with the most negative multiplier.
    // The balances are bilinear, so a multiplier promises descent only near the solution it belongs to: releasing a
    // bound can lead, through the bounds the far solution then crosses, to a solution inside the bounds with a larger
    // sum of squares than the one the release left (for a train with unmeasured fractions: release a fraction held at
    // zero, a flow goes to -178 without it, holding that flow at zero then needs the fraction held again, and the
    // passes cycle through the same working sets). The passes therefore keep the best solution inside the bounds: one
    // with a larger sum of squares returns to it and keeps the bound whose release led away; and a release that would
    // return to a working set already solved is not taken. The passes cannot cycle.
    // The working set starts as the last solution's: readings of the same instruments window after window mostly
    // leave the same bounds active, and the passes that would find them again are saved. A bound held wrongly is
    // released by its multiplier, so the answer is the one from an empty start.
    private ReconciliationResult SolveWithinBounds(double flowScale, bool warm)
    {
        var working = warm ? new SortedDictionary<int, double>(_lastWorking) : new SortedDictionary<int, double>();
        var visited = new HashSet<string>(StringComparer.Ordinal);
        var kept = new HashSet<int>();
        SortedDictionary<int, double>? bestWorking = null;
        double bestStatistic = double.PositiveInfinity;
        int releasedFromBest = -1;
        double[]? inside = null;
        int limit = (2 * _n) + 10;
        for (int pass = 0; pass < limit; pass++)
        {
            visited.Add(WorkingSetKey(working, -1));
            ReconciliationSolver solver = LayoutFor(working, out List<int> measured, out List<int> held);
            for (int c = 0; c < measured.Count; c++)
            {
                int k = measured[c];
                solver.SetVariance(c, _sigma[k] * _sigma[k]);
                _engineReadings[c] = _readings[k];
            }

            for (int h = 0; h < held.Count; h++)
            {
                int v = held[h];
                solver.SetHeld(h, working.TryGetValue(v, out double bound) ? bound : _gauged && v == _gauge ? 1.0 : _readings[_measurementOf[v]]);
            }

            solver.SetAccumulation(_gauged ? null : _accumulation);
            SolverOutcome outcome = solver.Solve(_engineReadings.AsSpan(0, measured.Count), out int iterations, out double residual, out double step);
            if (outcome != SolverOutcome.Converged)
            {
                return SolveFailure(outcome, working, iterations, residual, step, solver.StillConverging);
            }

            // Violations of the bounds by the quantities that got a value.
            int blocking = -1;
            double blockingBound = 0;
            double best = double.PositiveInfinity;
            double worst = 0;
            for (int v = 0; v < _n; v++)
            {
                if (working.ContainsKey(v) || solver.IsHeld(v) || !HasValue(solver, v))
                {
                    continue;
                }

                bool flow = IsFlowVariable(v);
                double scale = flow ? flowScale : 1;
                double value = solver.ValueAt(v);
                double bound = value < 0 ? 0 : !flow && value > 1 ? 1 : double.NaN;
                double violation = Math.Abs(value - bound) / scale;
                if (double.IsNaN(bound) || violation <= BoundTolerance)
                {
                    continue;
                }

                // From the last point inside the bounds the first bound crossed on the way here blocks; without such a
                // point, the bound left farthest.
                double from = inside is null ? double.NaN : inside[v];
                bool fromInside = double.IsFinite(from) && from >= 0 && (flow || from <= 1);
                double alpha = fromInside && from != value ? (from - bound) / (from - value) : double.PositiveInfinity;
                if (alpha < best || (double.IsPositiveInfinity(best) && violation > worst))
                {
                    best = alpha;
                    worst = violation;
                    blocking = v;
                    blockingBound = bound;
                }
            }

            if (blocking >= 0)
            {
                working[blocking] = blockingBound;
                continue;
            }

            // Inside the bounds: back to the best solution when the last release from there did not lead below it;
            // else release the bound whose multiplier says the optimum lies inside.
            double statistic = Statistic(solver, working);
            double tolerance = 1e-8 * Math.Max(1, statistic);
            if (bestWorking is not null && releasedFromBest >= 0 && statistic > bestStatistic + (1e-8 * Math.Max(1, bestStatistic)))
            {
                kept.Add(releasedFromBest);
                releasedFromBest = -1;
                working = new SortedDictionary<int, double>(bestWorking);
                inside = null;
                continue;
            }

            bool atBest = statistic <= bestStatistic;
            if (atBest)
            {
                bestStatistic = statistic;
                bestWorking = new SortedDictionary<int, double>(working);
            }

            int release = -1;
            double strongest = tolerance;
            for (int h = 0; h < held.Count; h++)
            {
                int v = held[h];
                if (!working.TryGetValue(v, out double bound))
                {
                    continue;
                }

                double lambda = solver.HeldMultiplier(h);
                int k = _measurementOf[v];
                if (k >= 0 && _roles[k] == MeasurementRole.Adjusted)
                {
                    lambda += (bound - _readings[k]) / (_sigma[k] * _sigma[k]);
                }

                // At a lower bound the optimum lies inside when increasing the quantity lowers the objective.
                double inward = (bound == 0 ? -lambda : lambda) * (IsFlowVariable(v) ? flowScale : 1);
                if (inward > strongest && !kept.Contains(v) && !visited.Contains(WorkingSetKey(working, v)))
                {
                    strongest = inward;
                    release = v;
                }
            }

            if (release >= 0)
            {
                inside = new double[_n];
                for (int v = 0; v < _n; v++)
                {
                    inside[v] = HasValue(solver, v) || solver.IsHeld(v) ? solver.ValueAt(v) : double.NaN;
                }

                working.Remove(release);
                releasedFromBest = atBest ? release : -1;
                continue;
            }

            _lastWorking.Clear();
            foreach ((int v, double b) in working)
            {
                _lastWorking[v] = b;
            }

            return BuildResult(solver, working, iterations, residual);
        }

        return Failure(
            ReconciliationStatus.Infeasible,
            $"The reconciliation within the bounds (flows at or above zero, fractions in [0, 1]) did not settle on a set of active bounds after {limit} passes. " +
            "Check the measurements for values far from any consistent state.");
    }

    // The working set without quantity <paramref name="except"/> (-1: all of it), as text.
    private static string WorkingSetKey(SortedDictionary<int, double> working, int except) =>
        string.Join(',', working.Keys.Where(v => v != except));

    private bool IsFlowVariable(int variable) => variable % (_network.Components.Count + 1) == 0;

    private bool HasValue(ReconciliationSolver solver, int variable)
    {
        int k = _measurementOf[variable];
        if (k >= 0 && _roles[k] != MeasurementRole.NoInformation)
        {
            return !solver.IsHeld(variable);
        }

        return !solver.IsHeld(variable) && solver.Unmeasured(variable, out _);
    }

    // The solver of a layout: the adjusted measurements not held at a bound, and the held quantities (exact readings and
    // the working set), both in network order.
    private ReconciliationSolver LayoutFor(SortedDictionary<int, double> working, out List<int> measured, out List<int> held)
    {
        // The usual call: no bound active and the same roles as the last such call.
        bool plain = working.Count == 0 && !_gauged;
        if (plain && _plainSolver is not null && _roles.AsSpan().SequenceEqual(_plainRoles))
        {
            measured = _plainMeasured!;
            held = _plainHeld!;
            return _plainSolver;
        }

        measured = [];
        held = [];
        for (int v = 0; v < _n; v++)
        {
            int k = _measurementOf[v];
            char code = '.';
            if (working.ContainsKey(v) || (k >= 0 && _roles[k] == MeasurementRole.Exact) || (_gauged && v == _gauge))
            {
                held.Add(v);
                code = 'h';
            }
            else if (k >= 0 && _roles[k] == MeasurementRole.Adjusted)
            {
                measured.Add(k);
                code = 'm';
            }

            _layoutKey[v] = code;
        }

        string key = new(_layoutKey);
        if (!_layouts.TryGetValue(key, out ReconciliationSolver? solver))
        {
            if (_layouts.Count >= 64)
            {
                _layouts.Clear();
            }

            solver = new ReconciliationSolver(_network, _options, [.. measured.Select(k => _variableOf[k])], held);
            _layouts[key] = solver;
        }

        if (plain)
        {
            _plainSolver = solver;
            _plainMeasured = measured;
            _plainHeld = held;
            _roles.CopyTo(_plainRoles, 0);
        }

        return solver;
    }

    private double Statistic(ReconciliationSolver solver, SortedDictionary<int, double> working)
    {
        double statistic = 0;
        for (int k = 0; k < _keys.Length; k++)
        {
            if (_roles[k] != MeasurementRole.Adjusted)
            {
                continue;
            }

            int v = _variableOf[k];
            double value = working.TryGetValue(v, out double bound) ? bound : solver.ValueAt(v);
            double a = value - _readings[k];
            statistic += a * a / (_sigma[k] * _sigma[k]);
        }

        return statistic;
    }

    private ReconciliationResult SolveFailure(SolverOutcome outcome, SortedDictionary<int, double> working, int iterations, double residual, double step, bool stillConverging)
    {
        string held = string.Join(", ", working.Select(w => $"{_network.KeyAt(w.Key)} = {w.Value:G3}"));
        var exact = new List<string>();
        for (int k = 0; k < _keys.Length; k++)
        {
            if (_roles[k] == MeasurementRole.Exact)
            {
                exact.Add(_keys[k].ToString());
            }
        }

        if (outcome == SolverOutcome.Infeasible)
        {
            string why = working.Count > 0 && exact.Count > 0
                ? $"with the exactly known values ({string.Join(", ", exact)}) and the bounds reached ({held})"
                : working.Count > 0 ? $"with the bounds reached ({held})"
                : $"with the exactly known values ({string.Join(", ", exact)})";
            return Failure(
                ReconciliationStatus.Infeasible,
                $"The data cannot be reconciled within the bounds (flows at or above zero, fractions in [0, 1]): {why} no adjustment of the " +
                $"other measurements closes the balances (largest relative balance residual {residual:G3}). " +
                "Check those readings and their sigmas: a sigma far below the others makes a reading exact.");
        }

        return Failure(
            ReconciliationStatus.NotConverged,
            $"The bilinear reconciliation of {_network.Streams.Count} streams did not converge: after {iterations} iterations " +
            $"the largest relative balance residual is {residual:G3} (tolerance {_options.Tolerance:G3}) and the last relative step {step:G3}" +
            (working.Count > 0 ? $", with the bounds {held} active" : string.Empty) + ". " +
            (stillConverging
                ? "The steps were still shrinking: raise MaxIterations."
                : "The steps were not shrinking, so more iterations will not help: check the measurements for values far from any " +
                  "consistent state (a gross error), or give doubtful readings larger sigmas."));
    }

    private ReconciliationResult Failure(ReconciliationStatus status, string message)
    {
        var estimates = new QuantityEstimate[_n];
        for (int v = 0; v < _n; v++)
        {
            int k = _measurementOf[v];
            estimates[v] = new QuantityEstimate(_network.KeyAt(v), double.NaN, double.NaN, k >= 0 ? _readings[k] : null, QuantityStatus.Unobservable);
        }

        return new ReconciliationResult(_network, status, estimates, new GlobalTest(double.NaN, 0, 0, double.NaN, false), [], 0, double.NaN)
        {
            Message = message,
        };
    }

    private double ChiSquareCritical(int dof)
    {
        if (!_chiSquareCritical.TryGetValue(dof, out double value))
        {
            value = GrossErrorTests.ChiSquareCritical(dof, _options.Significance);
            _chiSquareCritical[dof] = value;
        }

        return value;
    }

    private double SidakCritical(int tests)
    {
        if (!_sidakCritical.TryGetValue(tests, out double value))
        {
            value = GrossErrorTests.SidakCritical(tests, _options.Significance);
            _sidakCritical[tests] = value;
        }

        return value;
    }

    private ReconciliationResult BuildResult(ReconciliationSolver solver, SortedDictionary<int, double> working, int iterations, double residual)
    {
        var estimates = new QuantityEstimate[_n];
        var tests = new List<MeasurementTest>();
        var active = new List<QuantityKey>();
        double statistic = 0;
        int column = 0;
        int redundant = 0;
        var normalized = new double[_keys.Length];
        var adjustments = new double[_keys.Length];
        var testOf = new bool[_keys.Length];
        for (int v = 0; v < _n; v++)
        {
            QuantityKey key = _network.KeyAt(v);
            int k = _measurementOf[v];
            double? reading = k >= 0 ? _readings[k] : null;
            if (working.TryGetValue(v, out double bound))
            {
                active.Add(key);
                if (k >= 0 && _roles[k] == MeasurementRole.Adjusted)
                {
                    double a = bound - _readings[k];
                    statistic += a * a / (_sigma[k] * _sigma[k]);
                }

                QuantityStatus status = k >= 0 && _roles[k] == MeasurementRole.Adjusted ? QuantityStatus.NonRedundant : QuantityStatus.Observable;
                estimates[v] = new QuantityEstimate(key, bound, 0, reading, status) { AtBound = true };
                continue;
            }

            if (k >= 0 && _roles[k] == MeasurementRole.Exact)
            {
                estimates[v] = new QuantityEstimate(key, _readings[k], 0, reading, QuantityStatus.NonRedundant);
                continue;
            }

            if (k >= 0 && _roles[k] == MeasurementRole.Adjusted)
            {
                double value = Clamp(v, solver.ValueAt(v));
                bool isRedundant = solver.Measured(column++, out double variance, out double adjustmentVariance);
                double a = value - _readings[k];
                statistic += a * a / (_sigma[k] * _sigma[k]);
                if (isRedundant)
                {
                    redundant++;
                    testOf[k] = true;
                    adjustments[k] = a;
                    normalized[k] = a / Math.Sqrt(adjustmentVariance);
                }

                estimates[v] = new QuantityEstimate(key, value, Math.Sqrt(variance), reading, isRedundant ? QuantityStatus.Redundant : QuantityStatus.NonRedundant);
                continue;
            }

            if (_gauged && IsFlowVariable(v))
            {
                estimates[v] = new QuantityEstimate(key, double.NaN, double.NaN, reading, QuantityStatus.Unobservable);
                continue;
            }

            estimates[v] = solver.Unmeasured(v, out double unmeasuredVariance)
                ? new QuantityEstimate(key, Clamp(v, solver.ValueAt(v)), Math.Sqrt(unmeasuredVariance), reading, QuantityStatus.Observable)
                : new QuantityEstimate(key, double.NaN, double.NaN, reading, QuantityStatus.Unobservable);
        }

        double critical = redundant > 0 ? SidakCritical(redundant) : 0;
        for (int k = 0; k < _keys.Length; k++)
        {
            if (testOf[k])
            {
                tests.Add(new MeasurementTest(_keys[k], adjustments[k], normalized[k], critical, Math.Abs(normalized[k]) > critical));
            }
        }

        int dof = solver.DegreesOfFreedom;
        GlobalTest global = dof == 0
            ? new GlobalTest(0, 0, 0, 1, true)
            : new GlobalTest(statistic, dof, ChiSquareCritical(dof), 1 - ChiSquared.CDF(dof, statistic), statistic <= ChiSquareCritical(dof));
        ReconciliationStatus overall = dof == 0 || redundant == 0 ? ReconciliationStatus.NothingRedundant : ReconciliationStatus.Reconciled;
        return new ReconciliationResult(_network, overall, estimates, global, tests, iterations, residual) { ActiveBounds = active };
    }

    // A value within the tolerance of a bound is reported at the bound (no -1e-12 flows or 1 + 1e-15 fractions).
    private double Clamp(int variable, double value) =>
        IsFlowVariable(variable) ? Math.Max(0, value) : Math.Clamp(value, 0, 1);
}

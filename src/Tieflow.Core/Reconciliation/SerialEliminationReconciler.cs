namespace Tieflow.Core.Reconciliation;

/// <summary>
/// Reconciliation with serial elimination of gross errors (see <see cref="DataReconciler.Reconcile(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?)"/>) that keeps the
/// problems it prepares, one per set of measured quantities (in any order), and reconciles later measurements of
/// the same quantities on them with new values and sigmas: a monitor that reconciles the same instruments window after
/// window prepares each layout once. The answers are those of a newly prepared problem (to roundoff). Not safe for
/// concurrent use.
/// </summary>
public sealed class SerialEliminationReconciler
{
    private readonly ProcessNetwork _network;
    private readonly ReconciliationOptions _options;
    private readonly int _capacity;
    private readonly Dictionary<string, Prepared> _problems = new(StringComparer.Ordinal);
    private readonly List<Measurement> _remaining = [];
    private int[] _slot = [];
    private char[] _signature = [];
    private double[] _values = [];
    private double[] _sigmas = [];
    private IReadOnlyList<NodeAccumulation>? _accumulation;

    /// <summary>Creates a reconciler for one network.</summary>
    /// <param name="network">The network.</param>
    /// <param name="options">Settings; the defaults when <see langword="null"/>.</param>
    /// <param name="capacity">Most prepared problems kept (all are dropped when a new one would exceed it); at least 1.</param>
    /// <exception cref="ArgumentOutOfRangeException">The options are out of range, or the capacity is below 1.</exception>
    public SerialEliminationReconciler(ProcessNetwork network, ReconciliationOptions? options = null, int capacity = 32)
    {
        ArgumentNullException.ThrowIfNull(network);
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _network = network;
        _options = options ?? ReconciliationOptions.Default;
        _options.Validate();
        _capacity = capacity;
    }

    /// <summary>Problems prepared and kept (for the tests).</summary>
    internal int PreparedCount => _problems.Count;

    /// <summary>
    /// Reconciles the measurements and, while the global test fails, removes the measurement with the largest absolute
    /// normalised adjustment and reconciles again, until the test passes or nothing redundant is left.
    /// </summary>
    /// <param name="measurements">The measurements (see <see cref="ReconciliationProblem.Create(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?)"/> for the rules).</param>
    /// <param name="accumulation">Known rates of accumulation of the nodes (<see cref="NodeAccumulation"/>); <see langword="null"/> for steady state.</param>
    /// <param name="eliminate">Whether to search for gross errors; when <see langword="false"/> the measurements are
    /// reconciled once, all of them kept, and the report names no suspects (for data whose model is known not to hold,
    /// where a failed global test says nothing about any one instrument).</param>
    /// <exception cref="ArgumentException">A measurement or an accumulation is invalid; the message names it.</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge.</exception>
    public ReconciliationReport Reconcile(IReadOnlyList<Measurement> measurements, IReadOnlyList<NodeAccumulation>? accumulation = null, bool eliminate = true)
    {
        ArgumentNullException.ThrowIfNull(measurements);
        _accumulation = accumulation;
        ReconciliationResult initial = ReconcileOnce(measurements);
        var suspects = new List<QuantityKey>();
        ReconciliationResult current = initial;
        if (eliminate && !current.GlobalTest.Passed && current.MeasurementTests.Count > 0)
        {
            _remaining.Clear();
            _remaining.AddRange(measurements);
            while (!current.GlobalTest.Passed && current.MeasurementTests.Count > 0)
            {
                MeasurementTest worst = current.MeasurementTests[0];
                foreach (MeasurementTest t in current.MeasurementTests)
                {
                    if (Math.Abs(t.Normalized) > Math.Abs(worst.Normalized))
                    {
                        worst = t;
                    }
                }

                suspects.Add(worst.Key);
                _remaining.RemoveAll(m => m.Key == worst.Key);
                current = ReconcileOnce(_remaining);
            }
        }

        return new ReconciliationReport(initial, current, suspects);
    }

    private ReconciliationResult ReconcileOnce(IReadOnlyList<Measurement> measurements)
    {
        int count = measurements.Count;
        int n = _network.QuantityCount;
        if (_slot.Length != n)
        {
            _slot = new int[n];
            _signature = new char[n];
            Array.Fill(_slot, -1);
        }

        if (_values.Length < count)
        {
            _values = new double[Math.Max(count, 2 * _values.Length)];
            _sigmas = new double[_values.Length];
        }

        // The problem of this set of quantities, whatever their order: a window's readings arrive in no fixed order. A
        // key the network does not have, or one given twice, prepares a new problem, whose checks name it.
        bool valid = true;
        Array.Fill(_signature, '.');
        for (int i = 0; i < count && valid; i++)
        {
            int index = _network.IndexOf(measurements[i].Key);
            valid = index >= 0 && _slot[index] < 0;
            if (valid)
            {
                _slot[index] = i;
                _signature[index] = 'm';
            }
        }

        try
        {
            if (!valid)
            {
                return ReconciliationProblem.Create(_network, measurements, _options, _accumulation).Reconcile();
            }

            string signature = new(_signature);
            if (!_problems.TryGetValue(signature, out Prepared? prepared))
            {
                ReconciliationProblem problem = ReconciliationProblem.Create(_network, measurements, _options, _accumulation);
                if (_problems.Count >= _capacity)
                {
                    _problems.Clear();
                }

                int[] order = new int[count];
                for (int i = 0; i < count; i++)
                {
                    order[i] = _network.IndexOf(measurements[i].Key);
                }

                _problems[signature] = new Prepared(problem, order);
                return problem.Reconcile();
            }

            // The values and sigmas in the order the problem was prepared with.
            for (int j = 0; j < count; j++)
            {
                Measurement m = measurements[_slot[prepared.Order[j]]];
                _values[j] = m.Value;
                _sigmas[j] = m.Sigma;
            }

            prepared.Problem.SetAccumulation(_accumulation);
            return prepared.Problem.Reconcile(_values.AsSpan(0, count), _sigmas.AsSpan(0, count));
        }
        finally
        {
            for (int i = 0; i < count; i++)
            {
                int index = _network.IndexOf(measurements[i].Key);
                if (index >= 0)
                {
                    _slot[index] = -1;
                }
            }
        }
    }

    /// <summary>A prepared problem and the network position of each of its measured quantities, in its order.</summary>
    private sealed record Prepared(ReconciliationProblem Problem, int[] Order);
}

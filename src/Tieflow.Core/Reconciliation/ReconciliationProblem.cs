using MathNet.Numerics.Distributions;

namespace Tieflow.Core.Reconciliation;

/// <summary>
/// A reconciliation prepared for one network and one set of measured quantities with their standard deviations.
/// <para>
/// Minimises the weighted sum of squared adjustments of the measurements subject to the balances: total flow per
/// node for a flow-only network (linear), or one balance per node and component plus fractions summing to one per
/// stream (bilinear in flow times fraction). The unmeasured quantities are projected out of the linearised balances
/// with a column-pivoted Householder QR factorisation (the QR form of Crowe's projection); the bilinear problem is
/// solved by successive linearisation until the balances close. The projection also classifies the quantities
/// (redundant, non-redundant, observable, unobservable) and gives the linearised covariance of every estimate.
/// </para>
/// <para>
/// Prepare once and call <see cref="Reconcile(ReadOnlySpan{double})"/> with new readings: a flow-only problem then
/// costs a few matrix-vector products. An instance keeps its workspace and is not safe for concurrent use.
/// </para>
/// <para>
/// No bounds are imposed: a fraction measured near zero or one may be reconciled slightly outside [0, 1], and a
/// small flow slightly below zero, when the balances ask for it. The closure of a stream with an unmeasured fraction
/// is substituted (that fraction is one minus the others) rather than carried as a balance.
/// </para>
/// </summary>
public sealed class ReconciliationProblem
{
    // Rank decisions are made on ratios (a remaining column norm to its original norm, a Cholesky pivot to the largest
    // diagonal), so that flows of hundreds and fractions below one are judged alike.
    private const double RankTolerance = 1e-9;
    private const double RedundancyTolerance = 1e-9;
    private const double PivotTolerance = 1e-12;
    private const int Dependent = int.MinValue;
    private const int Unassigned = int.MinValue + 1;

    private readonly ProcessNetwork _network;
    private readonly ReconciliationOptions _options;
    private readonly QuantityKey[] _keys;
    private readonly int _n;
    private readonly int _m;
    private readonly int _nx;
    private readonly int _nu;
    private readonly int _nc;
    private readonly int _stride;
    private readonly int[] _varOfMeasurement;
    private readonly int[] _varOfUnmeasured;
    private readonly int[] _column;
    private readonly int[] _dependentOf;
    private readonly int[] _normalizationRow;
    private readonly int[] _positionOf;
    private readonly double[] _sensitivity;
    private readonly double[] _varDependent;
    private readonly double[] _sigma2;
    private readonly double[] _initialValues;

    // Incidence of the nodes: streams in CSR form with +1 for a stream entering the node and -1 for one leaving it.
    private readonly int[] _incidenceStart;
    private readonly int[] _incidenceStream;
    private readonly double[] _incidenceSign;

    // Workspace, allocated once.
    private readonly double[] _y;
    private readonly double[] _z;
    private readonly double[] _ax;
    private readonly double[] _au;
    private readonly double[] _v;
    private readonly double[] _tau;
    private readonly double[] _norm0;
    private readonly int[] _perm;
    private readonly double[] _f;
    private readonly double[] _scale;
    private readonly double[] _qtf;
    private readonly double[] _w;
    private readonly int[] _gsel;
    private readonly double[] _diag0;
    private readonly double[] _rp;
    private readonly double[] _mu;
    private readonly double[] _xNew;
    private readonly double[] _dx;
    private readonly double[] _du;
    private readonly double[] _varAdjustment;
    private readonly double[] _varMeasured;
    private readonly double[] _varUnmeasured;
    private readonly bool[] _observable;
    private readonly bool[] _redundant;
    private readonly double[] _h;
    private readonly double[] _bsel;
    private readonly double[] _k;
    private readonly double[] _column1;
    private readonly bool _useMasks;
    private readonly ulong[] _maskAx;
    private readonly ulong[] _maskAu;
    private readonly ulong[] _maskV;
    private readonly Dictionary<int, double> _chiSquareCritical = [];
    private readonly Dictionary<int, double> _sidakCritical = [];

    private int _rank;
    private int _p;
    private int _q;
    private int _redundantCount;
    private bool _linearPrepared;
    private bool _balancesCurrent;

    private ReconciliationProblem(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions options)
    {
        _network = network;
        _options = options;
        _nc = network.Components.Count;
        _stride = _nc + 1;
        _n = network.QuantityCount;
        int ns = network.Streams.Count;
        int nn = network.Nodes.Count;
        _nx = measurements.Count;
        _keys = new QuantityKey[_nx];
        _varOfMeasurement = new int[_nx];
        _column = new int[_n];
        _sigma2 = new double[_nx];
        _initialValues = new double[_nx];
        Array.Fill(_column, Unassigned);
        for (int i = 0; i < _nx; i++)
        {
            Measurement meas = measurements[i];
            int v = network.IndexOf(meas.Key);
            _keys[i] = meas.Key;
            _varOfMeasurement[i] = v;
            _column[v] = i;
            _sigma2[i] = meas.Sigma * meas.Sigma;
            _initialValues[i] = meas.Value;
        }

        // The closure of a stream with an unmeasured fraction is substituted (its last unmeasured fraction is one
        // minus the others) instead of being carried as a balance: fewer rows and unmeasured columns to factorise.
        _dependentOf = new int[ns];
        _normalizationRow = new int[ns];
        int rows = _nc == 0 ? nn : nn * _nc;
        int dependents = 0;
        for (int s = 0; s < ns; s++)
        {
            _dependentOf[s] = -1;
            _normalizationRow[s] = -1;
            if (_nc == 0)
            {
                continue;
            }

            for (int c = _nc - 1; c >= 0; c--)
            {
                int v = (s * _stride) + 1 + c;
                if (_column[v] == Unassigned)
                {
                    _dependentOf[s] = v;
                    _column[v] = Dependent;
                    dependents++;
                    break;
                }
            }

            if (_dependentOf[s] < 0)
            {
                _normalizationRow[s] = rows++;
            }
        }

        _m = rows;
        _nu = _n - _nx - dependents;
        _varOfUnmeasured = new int[_nu];
        int j = 0;
        for (int v = 0; v < _n; v++)
        {
            if (_column[v] == Unassigned)
            {
                _varOfUnmeasured[j] = v;
                _column[v] = ~j;
                j++;
            }
        }

        var start = new int[nn + 1];
        var lists = new List<(int Stream, double Sign)>[nn];
        for (int i = 0; i < nn; i++)
        {
            lists[i] = [];
        }

        for (int s = 0; s < ns; s++)
        {
            NetworkStream stream = network.Streams[s];
            if (stream.To is not null)
            {
                lists[network.IndexOfNode(stream.To)].Add((s, 1.0));
            }

            if (stream.From is not null)
            {
                lists[network.IndexOfNode(stream.From)].Add((s, -1.0));
            }
        }

        int total = lists.Sum(l => l.Count);
        _incidenceStream = new int[total];
        _incidenceSign = new double[total];
        int pos = 0;
        for (int i = 0; i < nn; i++)
        {
            start[i] = pos;
            foreach ((int stream, double sign) in lists[i])
            {
                _incidenceStream[pos] = stream;
                _incidenceSign[pos] = sign;
                pos++;
            }
        }

        start[nn] = pos;
        _incidenceStart = start;

        _y = new double[_nx];
        _z = new double[_n];
        _ax = new double[_m * _nx];
        _au = new double[_m * _nu];
        _v = new double[_m * _nu];
        _tau = new double[_nu];
        _norm0 = new double[_nu];
        _perm = new int[_nu];
        _f = new double[_m];
        _scale = new double[_m];
        _qtf = new double[_m];
        _w = new double[_m * _m];
        _gsel = new int[_m];
        _diag0 = new double[_m];
        _rp = new double[_m];
        _mu = new double[_m];
        _xNew = new double[_nx];
        _dx = new double[_nx];
        _du = new double[_nu];
        _varAdjustment = new double[_nx];
        _varMeasured = new double[_nx];
        _varUnmeasured = new double[_nu];
        _observable = new bool[_nu];
        _redundant = new bool[_nx];
        _h = new double[_m * _nx];
        _bsel = new double[_m * _nx];
        _k = new double[_nu * _nx];
        _column1 = new double[Math.Max(_m, 1)];
        _positionOf = new int[_nu];
        _sensitivity = new double[_nx];
        _varDependent = new double[ns];

        // Row-support bit masks of the columns and reflectors let the QR skip products of columns that share no
        // nonzero row: the balances are sparse, and for the six-stage train this removes most of the work.
        _useMasks = _m <= 64;
        _maskAx = new ulong[_nx];
        _maskAu = new ulong[_nu];
        _maskV = new ulong[_nu];
    }

    /// <summary>The network reconciled.</summary>
    public ProcessNetwork Network => _network;

    /// <summary>The measured quantities, in the order their values are expected.</summary>
    public IReadOnlyList<QuantityKey> MeasuredQuantities => _keys;

    /// <summary>The settings used.</summary>
    public ReconciliationOptions Options => _options;

    /// <summary>
    /// Prepares a reconciliation. The measurements fix which quantities are measured and their standard deviations;
    /// their values are the default readings of <see cref="Reconcile()"/>.
    /// </summary>
    /// <param name="network">The network.</param>
    /// <param name="measurements">At most one measurement per quantity; fractions only of declared components.</param>
    /// <param name="options">Settings; <see cref="ReconciliationOptions.Default"/> when <see langword="null"/>.</param>
    /// <exception cref="ArgumentException">A measurement names an unknown stream or component, repeats a quantity,
    /// measures a fraction of a flow-only network, has a sigma that is not above zero, a value that is not finite,
    /// or a fraction outside [0, 1]. The message names the measurement.</exception>
    public static ReconciliationProblem Create(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions? options = null)
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

        return new ReconciliationProblem(network, measurements, options);
    }

    /// <summary>Reconciles the readings given at preparation.</summary>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge.</exception>
    public ReconciliationResult Reconcile() => Reconcile(_initialValues);

    /// <summary>Reconciles new readings of the measured quantities, in the order of <see cref="MeasuredQuantities"/>.</summary>
    /// <exception cref="ArgumentException">The number of values differs from the number of measured quantities, or a value is not finite.</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge (the message says after how many
    /// iterations and what the residual was).</exception>
    public ReconciliationResult Reconcile(ReadOnlySpan<double> values)
    {
        if (!TryReconcileCore(values, out ReconciliationResult? result, out string? failure))
        {
            throw new ReconciliationException(failure!);
        }

        return result!;
    }

    /// <summary>
    /// Reconciles new readings with new standard deviations (for example sigmas relative to the readings), both in the
    /// order of <see cref="MeasuredQuantities"/>. A flow-only problem factorises again only when a sigma changed.
    /// </summary>
    /// <exception cref="ArgumentException">A length differs from the number of measured quantities, a value is not finite,
    /// or a sigma is not a finite number above zero.</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge.</exception>
    public ReconciliationResult Reconcile(ReadOnlySpan<double> values, ReadOnlySpan<double> sigmas)
    {
        SetSigmas(sigmas);
        return Reconcile(values);
    }

    /// <summary>Reconciles new readings; returns <see langword="false"/> instead of throwing when the iteration does not converge.</summary>
    /// <exception cref="ArgumentException">The number of values differs from the number of measured quantities, or a value is not finite.</exception>
    public bool TryReconcile(ReadOnlySpan<double> values, out ReconciliationResult? result) => TryReconcileCore(values, out result, out _);

    private void SetSigmas(ReadOnlySpan<double> sigmas)
    {
        Preconditions.SameLength(sigmas.Length, _nx);
        for (int i = 0; i < _nx; i++)
        {
            double sigma = sigmas[i];
            if (!(sigma > 0) || !double.IsFinite(sigma))
            {
                throw new ArgumentException($"The sigma of {_keys[i]} is {sigma}; expected a finite number above zero.", nameof(sigmas));
            }
        }

        for (int i = 0; i < _nx; i++)
        {
            double s2 = sigmas[i] * sigmas[i];
            if (s2 != _sigma2[i])
            {
                _sigma2[i] = s2;
                _linearPrepared = false;
            }
        }
    }

    private bool TryReconcileCore(ReadOnlySpan<double> values, out ReconciliationResult? result, out string? failure)
    {
        Preconditions.SameLength(values.Length, _nx);
        for (int i = 0; i < _nx; i++)
        {
            if (!double.IsFinite(values[i]))
            {
                throw new ArgumentException($"The value of {_keys[i]} is {values[i]}; expected a finite number.", nameof(values));
            }
        }

        values.CopyTo(_y);
        result = null;
        failure = null;
        int iterations;
        double residual;
        if (_nc == 0)
        {
            // Linear: the projection depends on the structure and the sigmas only, so it is factorised once.
            Array.Clear(_z);
            SetMeasuredToReadings();

            if (!_linearPrepared)
            {
                Factorize();
                ComputeVariances();
                _linearPrepared = true;
            }

            Step();
            iterations = 1;
            residual = RelativeResidual();
        }
        else
        {
            Initialize();
            double tolerance = _options.Tolerance;
            double step = double.PositiveInfinity;
            residual = double.PositiveInfinity;
            iterations = 0;
            bool converged = false;
            while (iterations < _options.MaxIterations)
            {
                iterations++;
                Factorize();
                step = Step();
                residual = RelativeResidual();
                if (!double.IsFinite(step) || !double.IsFinite(residual))
                {
                    break;
                }

                if (residual <= tolerance && step <= _options.StepTolerance)
                {
                    converged = true;
                    break;
                }
            }

            if (!converged)
            {
                failure = $"The bilinear reconciliation of {_network.Streams.Count} streams did not converge: after {iterations} iterations " +
                    $"the largest relative balance residual is {residual:G3} (tolerance {tolerance:G3}) and the last relative step {step:G3}. " +
                    "Check the measurements for values far from any consistent state, or raise MaxIterations.";
                return false;
            }

            ComputeVariances();
        }

        result = BuildResult(iterations, residual);
        return true;
    }

    private void SetMeasuredToReadings()
    {
        _balancesCurrent = false;
        for (int i = 0; i < _nx; i++)
        {
            _z[_varOfMeasurement[i]] = _y[i];
        }
    }

    // Starting values of the bilinear iteration: measured values as read, unknown flows from the total balances where a
    // node has a single unknown flow, unknown fractions from the remainder to one or from a node's component balance.
    private void Initialize()
    {
        Array.Clear(_z);
        SetMeasuredToReadings();
        int ns = _network.Streams.Count;
        int nn = _network.Nodes.Count;
        Span<bool> flowKnown = ns <= 256 ? stackalloc bool[ns] : new bool[ns];
        Span<bool> compositionKnown = ns <= 256 ? stackalloc bool[ns] : new bool[ns];
        double measuredFlowSum = 0;
        int measuredFlowCount = 0;
        for (int s = 0; s < ns; s++)
        {
            flowKnown[s] = _column[s * _stride] >= 0;
            if (flowKnown[s])
            {
                measuredFlowSum += Math.Abs(_z[s * _stride]);
                measuredFlowCount++;
            }
        }

        double fallbackFlow = measuredFlowCount > 0 && measuredFlowSum > 0 ? measuredFlowSum / measuredFlowCount : 1.0;
        bool progress = true;
        while (progress)
        {
            progress = false;
            for (int node = 0; node < nn; node++)
            {
                int unknown = -1;
                int count = 0;
                double sum = 0;
                for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                {
                    int s = _incidenceStream[e];
                    if (flowKnown[s])
                    {
                        sum += _incidenceSign[e] * _z[s * _stride];
                    }
                    else
                    {
                        unknown = e;
                        count++;
                    }
                }

                if (count == 1)
                {
                    int s = _incidenceStream[unknown];
                    double value = -sum / _incidenceSign[unknown];
                    _z[s * _stride] = value > 0 ? value : fallbackFlow;
                    flowKnown[s] = true;
                    progress = true;
                }
            }
        }

        for (int s = 0; s < ns; s++)
        {
            if (!flowKnown[s])
            {
                _z[s * _stride] = fallbackFlow;
            }

            int unknownCount = 0;
            double knownSum = 0;
            for (int c = 0; c < _nc; c++)
            {
                int v = (s * _stride) + 1 + c;
                if (_column[v] >= 0)
                {
                    knownSum += _z[v];
                }
                else
                {
                    unknownCount++;
                }
            }

            compositionKnown[s] = unknownCount < _nc;
            if (unknownCount > 0 && unknownCount < _nc)
            {
                double share = Math.Max(0, 1 - knownSum) / unknownCount;
                for (int c = 0; c < _nc; c++)
                {
                    int v = (s * _stride) + 1 + c;
                    if (_column[v] < 0)
                    {
                        _z[v] = share;
                    }
                }
            }
        }

        progress = true;
        while (progress)
        {
            progress = false;
            for (int node = 0; node < nn; node++)
            {
                int unknown = -1;
                int count = 0;
                for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                {
                    if (!compositionKnown[_incidenceStream[e]])
                    {
                        unknown = e;
                        count++;
                    }
                }

                if (count != 1)
                {
                    continue;
                }

                int t = _incidenceStream[unknown];
                double flow = _z[t * _stride];
                double total = 0;
                for (int c = 0; c < _nc; c++)
                {
                    double sum = 0;
                    for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                    {
                        int s = _incidenceStream[e];
                        if (s != t)
                        {
                            sum += _incidenceSign[e] * _z[s * _stride] * _z[(s * _stride) + 1 + c];
                        }
                    }

                    double part = flow > 0 ? Math.Max(0, -sum / _incidenceSign[unknown]) / flow : 0;
                    _z[(t * _stride) + 1 + c] = part;
                    total += part;
                }

                for (int c = 0; c < _nc; c++)
                {
                    int v = (t * _stride) + 1 + c;
                    _z[v] = total > 0 ? _z[v] / total : 1.0 / _nc;
                }

                compositionKnown[t] = true;
                progress = true;
            }
        }

        for (int s = 0; s < ns; s++)
        {
            if (!compositionKnown[s])
            {
                for (int c = 0; c < _nc; c++)
                {
                    _z[(s * _stride) + 1 + c] = 1.0 / _nc;
                }
            }
        }

        UpdateDependents();
    }

    private void UpdateDependents()
    {
        _balancesCurrent = false;
        for (int s = 0; s < _dependentOf.Length; s++)
        {
            int d = _dependentOf[s];
            if (d < 0)
            {
                continue;
            }

            double sum = 0;
            for (int c = 0; c < _nc; c++)
            {
                int v = (s * _stride) + 1 + c;
                if (v != d)
                {
                    sum += _z[v];
                }
            }

            _z[d] = 1 - sum;
        }
    }

    private void AddJacobian(int row, int variable, double value)
    {
        int col = _column[variable];
        if (col == Dependent)
        {
            // x_d = 1 - (sum of the other fractions of the stream).
            int first = variable - ((variable % _stride) - 1);
            for (int c = 0; c < _nc; c++)
            {
                if (first + c != variable)
                {
                    AddJacobian(row, first + c, -value);
                }
            }

            return;
        }

        ulong bit = _useMasks ? 1UL << row : ulong.MaxValue;
        if (col >= 0)
        {
            _ax[(col * _m) + row] += value;
            _maskAx[col] |= bit;
        }
        else
        {
            _au[(~col * _m) + row] += value;
            _maskAu[~col] |= bit;
        }
    }

    private void FillJacobian()
    {
        Array.Clear(_ax);
        Array.Clear(_au);
        Array.Clear(_maskAx);
        Array.Clear(_maskAu);
        int nn = _network.Nodes.Count;
        for (int node = 0; node < nn; node++)
        {
            for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
            {
                int s = _incidenceStream[e];
                double sign = _incidenceSign[e];
                int flowVar = s * _stride;
                if (_nc == 0)
                {
                    AddJacobian(node, flowVar, sign);
                    continue;
                }

                double flow = _z[flowVar];
                for (int c = 0; c < _nc; c++)
                {
                    int row = (node * _nc) + c;
                    AddJacobian(row, flowVar, sign * _z[flowVar + 1 + c]);
                    AddJacobian(row, flowVar + 1 + c, sign * flow);
                }
            }
        }

        if (_nc > 0)
        {
            int ns = _network.Streams.Count;
            for (int s = 0; s < ns; s++)
            {
                int row = _normalizationRow[s];
                for (int c = 0; c < _nc && row >= 0; c++)
                {
                    AddJacobian(row, (s * _stride) + 1 + c, 1.0);
                }
            }
        }
    }

    // Balance residuals f(z) and, per balance, the sum of the absolute terms (for relative residuals).
    private void EvaluateBalances()
    {
        _balancesCurrent = true;
        int nn = _network.Nodes.Count;
        Array.Clear(_f);
        Array.Clear(_scale);
        for (int node = 0; node < nn; node++)
        {
            for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
            {
                int s = _incidenceStream[e];
                double sign = _incidenceSign[e];
                double flow = _z[s * _stride];
                if (_nc == 0)
                {
                    _f[node] += sign * flow;
                    _scale[node] += Math.Abs(flow);
                    continue;
                }

                for (int c = 0; c < _nc; c++)
                {
                    int row = (node * _nc) + c;
                    double term = flow * _z[(s * _stride) + 1 + c];
                    _f[row] += sign * term;
                    _scale[row] += Math.Abs(term);
                }
            }
        }

        if (_nc > 0)
        {
            int ns = _network.Streams.Count;
            for (int s = 0; s < ns; s++)
            {
                int row = _normalizationRow[s];
                if (row < 0)
                {
                    continue;
                }

                double sum = 0;
                double abs = 0;
                for (int c = 0; c < _nc; c++)
                {
                    double x = _z[(s * _stride) + 1 + c];
                    sum += x;
                    abs += Math.Abs(x);
                }

                _f[row] = sum - 1;
                _scale[row] = Math.Max(1, abs);
            }
        }
    }

    private double RelativeResidual()
    {
        EvaluateBalances();
        double worst = 0;
        for (int i = 0; i < _m; i++)
        {
            double scale = _scale[i] > 0 ? _scale[i] : 1;
            worst = Math.Max(worst, Math.Abs(_f[i]) / scale);
        }

        return worst;
    }

    // Linearises at the current point, projects the unmeasured quantities out and factorises the projected system.
    private void Factorize()
    {
        FillJacobian();
        FactorUnmeasured();
        ProjectMeasured();
        FactorProjected();
    }

    // Householder QR of the unmeasured columns with column pivoting on the remaining-to-original norm ratio.
    private void FactorUnmeasured()
    {
        int m = _m;
        for (int j = 0; j < _nu; j++)
        {
            _perm[j] = j;
            ReadOnlySpan<double> col = _au.AsSpan(j * m, m);
            _norm0[j] = Math.Sqrt(DenseKernels.Dot(col, col));
        }

        int limit = Math.Min(m, _nu);
        _rank = 0;
        for (int k = 0; k < limit; k++)
        {
            int pivot = -1;
            double best = RankTolerance;
            double bestNorm = 0;
            ulong rowsFromK = _useMasks ? ulong.MaxValue << k : ulong.MaxValue;
            for (int j = k; j < _nu; j++)
            {
                if (_norm0[j] <= 0 || (_maskAu[j] & rowsFromK) == 0)
                {
                    continue;
                }

                ReadOnlySpan<double> rest = _au.AsSpan((j * m) + k, m - k);
                double norm = Math.Sqrt(DenseKernels.Dot(rest, rest));
                double ratio = norm / _norm0[j];
                if (ratio > best)
                {
                    best = ratio;
                    pivot = j;
                    bestNorm = norm;
                }
            }

            if (pivot < 0)
            {
                break;
            }

            if (pivot != k)
            {
                _au.AsSpan(k * m, m).CopyTo(_column1);
                _au.AsSpan(pivot * m, m).CopyTo(_au.AsSpan(k * m, m));
                _column1.AsSpan(0, m).CopyTo(_au.AsSpan(pivot * m, m));
                (_perm[k], _perm[pivot]) = (_perm[pivot], _perm[k]);
                (_norm0[k], _norm0[pivot]) = (_norm0[pivot], _norm0[k]);
                (_maskAu[k], _maskAu[pivot]) = (_maskAu[pivot], _maskAu[k]);
            }

            ulong maskV = _useMasks ? (_maskAu[k] & rowsFromK) | (1UL << k) : ulong.MaxValue;
            _maskV[k] = maskV;

            Span<double> x = _au.AsSpan((k * m) + k, m - k);
            double x0 = x[0];
            double beta = x0 >= 0 ? -bestNorm : bestNorm;
            double tau = (beta - x0) / beta;
            double inv = 1.0 / (x0 - beta);
            Span<double> v = _v.AsSpan((k * m) + k, m - k);
            v[0] = 1;
            for (int i = 1; i < v.Length; i++)
            {
                v[i] = x[i] * inv;
            }

            _tau[k] = tau;
            x[0] = beta;
            x[1..].Clear();
            for (int j = k + 1; j < _nu; j++)
            {
                if ((_maskAu[j] & maskV) != 0)
                {
                    DenseKernels.Reflect(v, tau, _au.AsSpan((j * m) + k, m - k));
                    _maskAu[j] |= maskV;
                }
            }

            _rank = k + 1;
        }
    }

    private void ApplyQTranspose(Span<double> column)
    {
        int m = _m;
        for (int k = 0; k < _rank; k++)
        {
            DenseKernels.Reflect(_v.AsSpan((k * m) + k, m - k), _tau[k], column[k..m]);
        }
    }

    private void ProjectMeasured()
    {
        int m = _m;
        for (int c = 0; c < _nx; c++)
        {
            Span<double> column = _ax.AsSpan(c * m, m);
            ulong mask = _maskAx[c];
            for (int k = 0; k < _rank; k++)
            {
                if ((mask & _maskV[k]) != 0)
                {
                    DenseKernels.Reflect(_v.AsSpan((k * m) + k, m - k), _tau[k], column[k..m]);
                    mask |= _maskV[k];
                }
            }

            _maskAx[c] = mask;
        }

        _p = _m - _rank;
    }

    // Pivoted Cholesky of G = B S B' (B the projected measured columns, S the measurement covariance); the pivots kept
    // select an independent subset of the projected balances, and their number is the degrees of freedom.
    private void FactorProjected()
    {
        int p = _p;
        int r = _rank;
        int m = _m;
        Span<double> g = _w.AsSpan(0, p * p);
        g.Clear();
        for (int k = 0; k < _nx; k++)
        {
            ReadOnlySpan<double> b = _ax.AsSpan((k * m) + r, p);
            double s2 = _sigma2[k];
            for (int i = 0; i < p; i++)
            {
                double bi = b[i] * s2;
                if (bi == 0)
                {
                    continue;
                }

                Span<double> row = g.Slice(i * p, p);
                for (int j = 0; j <= i; j++)
                {
                    row[j] += bi * b[j];
                }
            }
        }

        double maxDiag = 0;
        for (int i = 0; i < p; i++)
        {
            for (int j = 0; j < i; j++)
            {
                g[(j * p) + i] = g[(i * p) + j];
            }

            _diag0[i] = g[(i * p) + i];
            maxDiag = Math.Max(maxDiag, _diag0[i]);
            _gsel[i] = i;
        }

        // A pivot is judged against the original diagonal of its own row: a dependent balance leaves roundoff only.
        _q = 0;
        for (int k = 0; k < p; k++)
        {
            int pivot = -1;
            double best = PivotTolerance;
            for (int i = k; i < p; i++)
            {
                double d0 = _diag0[_gsel[i]];
                double ratio = d0 > 0 ? g[(i * p) + i] / d0 : 0;
                if (ratio > best)
                {
                    best = ratio;
                    pivot = i;
                }
            }

            if (pivot < 0 || maxDiag <= 0)
            {
                break;
            }

            if (pivot != k)
            {
                for (int j = 0; j < p; j++)
                {
                    (g[(k * p) + j], g[(pivot * p) + j]) = (g[(pivot * p) + j], g[(k * p) + j]);
                }

                for (int i = 0; i < p; i++)
                {
                    (g[(i * p) + k], g[(i * p) + pivot]) = (g[(i * p) + pivot], g[(i * p) + k]);
                }

                (_gsel[k], _gsel[pivot]) = (_gsel[pivot], _gsel[k]);
            }

            double lkk = Math.Sqrt(g[(k * p) + k]);
            g[(k * p) + k] = lkk;
            for (int i = k + 1; i < p; i++)
            {
                g[(i * p) + k] /= lkk;
            }

            for (int j = k + 1; j < p; j++)
            {
                double ljk = g[(j * p) + k];
                for (int i = j; i < p; i++)
                {
                    double value = g[(i * p) + j] - (g[(i * p) + k] * ljk);
                    g[(i * p) + j] = value;
                    g[(j * p) + i] = value;
                }
            }

            _q = k + 1;
        }

        // The selected projected rows, contiguous per measured column, for the vector kernels of the step.
        for (int k = 0; k < _nx; k++)
        {
            Span<double> target = _bsel.AsSpan(k * m, _q);
            int baseIndex = (k * m) + r;
            for (int i = 0; i < _q; i++)
            {
                target[i] = _ax[baseIndex + _gsel[i]];
            }
        }
    }

    private void ForwardSolve(Span<double> x)
    {
        int p = _p;
        for (int i = 0; i < _q; i++)
        {
            double sum = x[i];
            for (int j = 0; j < i; j++)
            {
                sum -= _w[(i * p) + j] * x[j];
            }

            x[i] = sum / _w[(i * p) + i];
        }
    }

    private void BackSolve(Span<double> x)
    {
        int p = _p;
        for (int i = _q - 1; i >= 0; i--)
        {
            double sum = x[i];
            for (int j = i + 1; j < _q; j++)
            {
                sum -= _w[(j * p) + i] * x[j];
            }

            x[i] = sum / _w[(i * p) + i];
        }
    }

    // Solves R11 x = b in place (R from the QR of the unmeasured columns, pivoted order).
    private void SolveR(Span<double> x)
    {
        int m = _m;
        for (int i = _rank - 1; i >= 0; i--)
        {
            double sum = x[i];
            for (int j = i + 1; j < _rank; j++)
            {
                sum -= _au[(j * m) + i] * x[j];
            }

            x[i] = sum / _au[(i * m) + i];
        }
    }

    // One step of successive linearisation with the current factorisation; returns the largest relative change.
    private double Step()
    {
        int m = _m;
        int r = _rank;
        if (!_balancesCurrent)
        {
            EvaluateBalances();
        }

        _f.CopyTo(_qtf, 0);
        ApplyQTranspose(_qtf);

        Span<double> rp = _rp.AsSpan(0, _q);
        for (int i = 0; i < _q; i++)
        {
            rp[i] = _qtf[r + _gsel[i]];
        }

        for (int k = 0; k < _nx; k++)
        {
            double d = _y[k] - _z[_varOfMeasurement[k]];
            if (d == 0)
            {
                continue;
            }

            DenseKernels.Axpy(d, _bsel.AsSpan(k * m, _q), rp);
        }

        Span<double> mu = _mu.AsSpan(0, _q);
        rp.CopyTo(mu);
        ForwardSolve(mu);
        BackSolve(mu);

        double flowScale = 0;
        for (int s = 0; s < _network.Streams.Count; s++)
        {
            flowScale = Math.Max(flowScale, Math.Abs(_z[s * _stride]));
        }

        flowScale = flowScale > 0 ? flowScale : 1;
        double step = 0;
        for (int k = 0; k < _nx; k++)
        {
            double sum = DenseKernels.Dot(_bsel.AsSpan(k * m, _q), mu);
            double xNew = _y[k] - (_sigma2[k] * sum);
            int variable = _varOfMeasurement[k];
            _dx[k] = xNew - _z[variable];
            _xNew[k] = xNew;
            step = Math.Max(step, Math.Abs(_dx[k]) / ScaleOf(variable, flowScale));
        }

        // Unmeasured: R11 du = -(Q'f)_top - (Q'Ax)_top dx; the free (unobservable) directions keep their values.
        Span<double> du = _du.AsSpan(0, r);
        for (int i = 0; i < r; i++)
        {
            du[i] = -_qtf[i];
        }

        for (int k = 0; k < _nx; k++)
        {
            double d = _dx[k];
            if (d == 0)
            {
                continue;
            }

            ReadOnlySpan<double> col = _ax.AsSpan(k * m, r);
            for (int i = 0; i < r; i++)
            {
                du[i] -= col[i] * d;
            }
        }

        SolveR(du);
        for (int i = 0; i < r; i++)
        {
            int variable = _varOfUnmeasured[_perm[i]];
            _z[variable] += du[i];
            step = Math.Max(step, Math.Abs(du[i]) / ScaleOf(variable, flowScale));
        }

        for (int k = 0; k < _nx; k++)
        {
            _z[_varOfMeasurement[k]] = _xNew[k];
        }

        UpdateDependents();
        _balancesCurrent = false;
        return step;
    }

    private double ScaleOf(int variable, double flowScale) => variable % _stride == 0 ? flowScale : 1.0;

    // Linearised covariance of the adjustments, the reconciled measurements and the observable unmeasured quantities.
    private void ComputeVariances()
    {
        int m = _m;
        int r = _rank;
        int q = _q;
        _redundantCount = 0;
        for (int k = 0; k < _nx; k++)
        {
            Span<double> h = _h.AsSpan(k * m, q);
            ReadOnlySpan<double> b = _bsel.AsSpan(k * m, q);
            double s2 = _sigma2[k];
            for (int i = 0; i < q; i++)
            {
                h[i] = s2 * b[i];
            }

            ForwardSolve(h);
            double va = DenseKernels.Dot(h, h);
            _redundant[k] = va > RedundancyTolerance * s2;
            if (_redundant[k])
            {
                _redundantCount++;
            }
            else
            {
                va = 0;
                h.Clear();
            }

            _varAdjustment[k] = Math.Min(va, s2);
            _varMeasured[k] = Math.Max(0, s2 - va);
        }

        // Observability: a basic unmeasured quantity is unobservable when a free direction of the null space moves it.
        for (int i = 0; i < _nu; i++)
        {
            _observable[i] = i < r;
        }

        Span<double> t = _column1.AsSpan(0, r);
        for (int f = r; f < _nu; f++)
        {
            _au.AsSpan(f * m, r).CopyTo(t);
            SolveR(t);
            for (int i = 0; i < r; i++)
            {
                if (Math.Abs(t[i]) * _norm0[f] > 1e-8 * _norm0[i])
                {
                    _observable[i] = false;
                }
            }
        }

        // K = -R11^-1 (Q'Ax)_top gives du/dx; Var(u) = K S K' - (H K')'(H K').
        for (int k = 0; k < _nx; k++)
        {
            Span<double> col = _k.AsSpan(k * _nu, r);
            _ax.AsSpan(k * m, r).CopyTo(col);
            SolveR(col);
        }

        Span<double> g = _rp.AsSpan(0, q);
        for (int i = 0; i < r; i++)
        {
            if (!_observable[i])
            {
                _varUnmeasured[i] = double.NaN;
                continue;
            }

            double direct = 0;
            g.Clear();
            for (int k = 0; k < _nx; k++)
            {
                double kik = _k[(k * _nu) + i];
                if (kik == 0)
                {
                    continue;
                }

                direct += kik * kik * _sigma2[k];
                DenseKernels.Axpy(kik, _h.AsSpan(k * m, q), g);
            }

            _varUnmeasured[i] = Math.Max(0, direct - DenseKernels.Dot(g, g));
        }

        for (int i = 0; i < _nu; i++)
        {
            _positionOf[_perm[i]] = i;
        }

        // A substituted fraction is one minus its siblings: its sensitivity to the reconciled measurements is minus
        // the sum of theirs, and it is observable when every sibling is measured or observable.
        for (int s = 0; s < _dependentOf.Length; s++)
        {
            int d = _dependentOf[s];
            if (d < 0)
            {
                continue;
            }

            Span<double> sensitivity = _sensitivity;
            sensitivity.Clear();
            bool observable = true;
            for (int c = 0; c < _nc && observable; c++)
            {
                int v = (s * _stride) + 1 + c;
                int col = _column[v];
                if (v == d)
                {
                    continue;
                }

                if (col >= 0)
                {
                    sensitivity[col] -= 1;
                    continue;
                }

                int pos = _positionOf[~col];
                if (!_observable[pos])
                {
                    observable = false;
                    break;
                }

                for (int k = 0; k < _nx; k++)
                {
                    sensitivity[k] += _k[(k * _nu) + pos];
                }
            }

            if (!observable)
            {
                _varDependent[s] = double.NaN;
                continue;
            }

            double direct = 0;
            g.Clear();
            for (int k = 0; k < _nx; k++)
            {
                double gk = sensitivity[k];
                if (gk == 0)
                {
                    continue;
                }

                direct += gk * gk * _sigma2[k];
                DenseKernels.Axpy(gk, _h.AsSpan(k * m, q), g);
            }

            _varDependent[s] = Math.Max(0, direct - DenseKernels.Dot(g, g));
        }
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

    private ReconciliationResult BuildResult(int iterations, double residual)
    {
        var estimates = new QuantityEstimate[_n];
        double statistic = 0;
        for (int k = 0; k < _nx; k++)
        {
            int variable = _varOfMeasurement[k];
            double a = _z[variable] - _y[k];
            statistic += a * a / _sigma2[k];
            estimates[variable] = new QuantityEstimate(
                _keys[k],
                _z[variable],
                Math.Sqrt(_varMeasured[k]),
                _y[k],
                _redundant[k] ? QuantityStatus.Redundant : QuantityStatus.NonRedundant);
        }

        for (int i = 0; i < _nu; i++)
        {
            int j = _perm[i];
            int variable = _varOfUnmeasured[j];
            QuantityKey key = _network.KeyAt(variable);
            estimates[variable] = _observable[i]
                ? new QuantityEstimate(key, _z[variable], Math.Sqrt(_varUnmeasured[i]), null, QuantityStatus.Observable)
                : new QuantityEstimate(key, double.NaN, double.NaN, null, QuantityStatus.Unobservable);
        }

        for (int s = 0; s < _dependentOf.Length; s++)
        {
            int d = _dependentOf[s];
            if (d >= 0)
            {
                QuantityKey key = _network.KeyAt(d);
                estimates[d] = double.IsNaN(_varDependent[s])
                    ? new QuantityEstimate(key, double.NaN, double.NaN, null, QuantityStatus.Unobservable)
                    : new QuantityEstimate(key, _z[d], Math.Sqrt(_varDependent[s]), null, QuantityStatus.Observable);
            }
        }

        int dof = _q;
        GlobalTest global = dof == 0
            ? new GlobalTest(0, 0, 0, 1, true)
            : new GlobalTest(statistic, dof, ChiSquareCritical(dof), 1 - ChiSquared.CDF(dof, statistic), statistic <= ChiSquareCritical(dof));

        var tests = new MeasurementTest[_redundantCount];
        double critical = _redundantCount > 0 ? SidakCritical(_redundantCount) : 0;
        int t = 0;
        for (int k = 0; k < _nx; k++)
        {
            if (!_redundant[k])
            {
                continue;
            }

            double a = _z[_varOfMeasurement[k]] - _y[k];
            double normalized = a / Math.Sqrt(_varAdjustment[k]);
            tests[t++] = new MeasurementTest(_keys[k], a, normalized, critical, Math.Abs(normalized) > critical);
        }

        ReconciliationStatus status = dof == 0 || _redundantCount == 0 ? ReconciliationStatus.NothingRedundant : ReconciliationStatus.Reconciled;
        return new ReconciliationResult(_network, status, estimates, global, tests, iterations, residual);
    }
}

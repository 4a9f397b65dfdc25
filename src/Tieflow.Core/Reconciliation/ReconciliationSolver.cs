using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <summary>
/// The weighted least-squares reconciliation of one layout: which quantities are adjusted measurements, which are held
/// at a known value (an exact reading or an active bound) and which are unmeasured.
/// <para>
/// Minimises the weighted sum of squared adjustments of the measurements subject to the balances: total flow per
/// node for a flow-only network (linear), or one balance per node and component plus fractions summing to one per
/// stream (bilinear in flow times fraction). The unmeasured quantities are projected out of the linearised balances
/// with a column-pivoted Householder QR factorisation (the QR form of Crowe's projection); the bilinear problem is
/// solved by successive linearisation until the balances close. The projection also classifies the quantities
/// (redundant, non-redundant, observable, unobservable) and gives the linearised covariance of every estimate.
/// The closure of a stream with an unmeasured fraction is substituted (that fraction is one minus the others) rather
/// than carried as a balance. Bounds are not imposed here; <see cref="ReconciliationProblem"/> does that with an
/// active set of held values.
/// </para>
/// </summary>
internal sealed class ReconciliationSolver
{
    // Rank decisions are made on ratios (a remaining column norm to its original norm, a Cholesky pivot to the largest
    // diagonal), so that flows of hundreds and fractions below one are judged alike.
    private const double RankTolerance = 1e-9;
    private const double RedundancyTolerance = 1e-9;
    private const double PivotTolerance = 1e-12;

    // Codes of _column for a quantity that is not a column: a substituted fraction, one held at a value, and one not yet placed.
    private const int Dependent = int.MinValue;
    private const int Held = int.MinValue + 1;
    private const int Unassigned = int.MinValue + 2;

    private readonly ProcessNetwork _network;
    private readonly ReconciliationOptions _options;
    private readonly int _n;
    private readonly int _m;
    private readonly int _nx;
    private readonly int _nu;
    private readonly int _nc;
    private readonly int _stride;
    private readonly int _nh;

    // Layout. _varOfMeasurement[k]: network position of adjusted measurement k. _varOfUnmeasured[j]: of unmeasured j.
    // _column[v]: k >= 0 for measurement k, ~j for unmeasured j, or one of the codes above. _dependentOf[s]: the
    // substituted fraction of stream s or -1; _normalizationRow[s]: the closure row of stream s or -1.
    // _varOfHeld[h] and _heldIndex[v]: the quantities held at a value, and the position of each among them.
    private readonly int[] _varOfMeasurement;
    private readonly int[] _varOfUnmeasured;
    private readonly int[] _column;
    private readonly int[] _dependentOf;
    private readonly int[] _normalizationRow;
    private readonly int[] _varOfHeld;
    private readonly int[] _heldIndex;
    private readonly double[] _heldValue;
    private readonly double[] _sigma2;

    // Incidence of the nodes: streams in CSR form with +1 for a stream entering the node and -1 for one leaving it.
    private readonly int[] _incidenceStart;
    private readonly int[] _incidenceStream;
    private readonly double[] _incidenceSign;

    // Workspace, allocated once. Column-major m-row blocks: _ax (Jacobian of the measured columns, then Q' of it),
    // _au (of the unmeasured columns, then R of their QR), _v (Householder vectors), _ah (of the held quantities,
    // for their multipliers), _bsel (the projected rows kept by the Cholesky, per measured column), _h (L^-1 of
    // S B' per measured column), _k (R11^-1 (Q'Ax)_top, du/dx, per measured column); _w the p x p projected matrix
    // and its Cholesky factor.
    private readonly double[] _y;
    private readonly double[] _z;
    private readonly double[] _ax;
    private readonly double[] _au;
    private readonly double[] _ah;
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
    private readonly double[] _duFull;
    private readonly double[] _nullBasis;
    private readonly double[] _wScaled;
    private readonly double[] _gram;
    private readonly double[] _gramRhs;
    private readonly double[] _varAdjustment;
    private readonly double[] _varMeasured;
    private readonly double[] _varUnmeasured;
    private readonly bool[] _observable;
    private readonly bool[] _redundant;
    private readonly double[] _h;
    private readonly double[] _bsel;
    private readonly double[] _k;
    private readonly double[] _column1;
    private readonly int[] _positionOf;
    private readonly double[] _sensitivity;
    private readonly double[] _varDependent;
    private readonly bool _useMasks;
    private readonly ulong[] _maskAx;
    private readonly ulong[] _maskAu;
    private readonly ulong[] _maskV;

    private double _startFlowScale;

    private int _rank;
    private int _p;
    private int _q;
    private int _redundantCount;
    private bool _linearPrepared;
    private bool _balancesCurrent;

    /// <summary>Lays out a reconciliation.</summary>
    /// <param name="network">The network.</param>
    /// <param name="options">Settings (validated).</param>
    /// <param name="measuredVariables">Network positions of the adjusted measurements, distinct.</param>
    /// <param name="heldVariables">Network positions of the quantities held at a value (<see cref="SetHeld"/>), distinct
    /// and not among the measured ones.</param>
    public ReconciliationSolver(ProcessNetwork network, ReconciliationOptions options, IReadOnlyList<int> measuredVariables, IReadOnlyList<int> heldVariables)
    {
        _network = network;
        _options = options;
        _nc = network.Components.Count;
        _stride = _nc + 1;
        _n = network.QuantityCount;
        int ns = network.Streams.Count;
        int nn = network.Nodes.Count;
        _nx = measuredVariables.Count;
        _nh = heldVariables.Count;
        _varOfMeasurement = [.. measuredVariables];
        _column = new int[_n];
        _sigma2 = new double[_nx];
        Array.Fill(_column, Unassigned);
        for (int i = 0; i < _nx; i++)
        {
            _column[_varOfMeasurement[i]] = i;
        }

        _varOfHeld = [.. heldVariables];
        _heldIndex = new int[_n];
        _heldValue = new double[_nh];
        Array.Fill(_heldIndex, -1);
        for (int h = 0; h < _nh; h++)
        {
            _column[_varOfHeld[h]] = Held;
            _heldIndex[_varOfHeld[h]] = h;
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
        _nu = _n - _nx - _nh - dependents;
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
        _ah = new double[_m * _nh];
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
        _duFull = new double[_nu];
        _nullBasis = new double[_nu * _nu];
        _wScaled = new double[_nu];
        _gram = new double[_nu * _nu];
        _gramRhs = new double[_nu];
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

    /// <summary>
    /// Whether the last iterations of a solve that did not converge shrank their steps steadily, or were too few to tell
    /// (more iterations would help).
    /// </summary>
    public bool StillConverging { get; private set; }

    /// <summary>Degrees of freedom of the last solution: the rank of the projected balances.</summary>
    public int DegreesOfFreedom => _q;

    /// <summary>Number of redundant measurements at the last solution.</summary>
    public int RedundantCount => _redundantCount;

    /// <summary>Sets the variance of adjusted measurement <paramref name="k"/>; a flow-only layout factorises again when it changed.</summary>
    public void SetVariance(int k, double variance)
    {
        if (variance != _sigma2[k])
        {
            _sigma2[k] = variance;
            _linearPrepared = false;
        }
    }

    /// <summary>Sets the value of held quantity <paramref name="h"/> (in the order given at construction).</summary>
    public void SetHeld(int h, double value) => _heldValue[h] = value;

    /// <summary>The value of a quantity at the last solution (last iterate after a failure).</summary>
    public double ValueAt(int variable) => _z[variable];

    /// <summary>Whether adjusted measurement <paramref name="k"/> is redundant, with the variances of its estimate and its adjustment.</summary>
    public bool Measured(int k, out double variance, out double adjustmentVariance)
    {
        variance = _varMeasured[k];
        adjustmentVariance = _varAdjustment[k];
        return _redundant[k];
    }

    /// <summary>
    /// Whether an unmeasured quantity (a column or a substituted fraction) is observable, with its variance.
    /// </summary>
    public bool Unmeasured(int variable, out double variance)
    {
        int col = _column[variable];
        if (col == Dependent)
        {
            variance = _varDependent[variable / _stride];
            return !double.IsNaN(variance);
        }

        int pos = _positionOf[~col];
        variance = _varUnmeasured[pos];
        return _observable[pos];
    }

    /// <summary>Whether a network position is an adjusted measurement, held, or unmeasured in this layout.</summary>
    public bool IsHeld(int variable) => _column[variable] == Held;

    /// <summary>
    /// Reconciles the readings of the adjusted measurements (in the order given at construction) with the held values
    /// set; on success the classification and variances are those of the solution.
    /// </summary>
    /// <param name="readings">One finite reading per adjusted measurement.</param>
    /// <param name="iterations">Linearisation steps taken.</param>
    /// <param name="residual">Largest balance residual relative to the sum of the absolute terms of its balance.</param>
    /// <param name="step">Largest relative change of the last step.</param>
    public SolverOutcome Solve(ReadOnlySpan<double> readings, out int iterations, out double residual, out double step)
    {
        readings.CopyTo(_y);
        double tolerance = _options.Tolerance;
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

            step = Step();
            iterations = 1;
            residual = RelativeResidual();

            // Only held values can leave a balance open in a linear problem: they contradict each other.
            return residual <= Math.Max(tolerance, 1e-12) ? SolverOutcome.Converged : SolverOutcome.Infeasible;
        }

        Initialize();
        step = double.PositiveInfinity;
        residual = double.PositiveInfinity;
        iterations = 0;
        int shrinking = 0;
        StillConverging = false;
        while (iterations < _options.MaxIterations)
        {
            iterations++;
            Factorize();
            double previous = step;
            step = Step();
            residual = RelativeResidual();
            shrinking = step < 0.9 * previous ? shrinking + 1 : 0;
            StillConverging = shrinking >= 3 || iterations < 4;
            if (!double.IsFinite(step) || !double.IsFinite(residual))
            {
                return SolverOutcome.NotConverged;
            }

            if (residual <= tolerance && step <= _options.StepTolerance)
            {
                ComputeVariances();
                return SolverOutcome.Converged;
            }

            // The step has stopped while a balance stays open: no adjustment of the measurements closes it with the
            // held values (a Gauss-Newton step on balances that cannot all hold).
            if (step <= _options.StepTolerance && iterations > 2 && residual > Math.Sqrt(tolerance))
            {
                return SolverOutcome.Infeasible;
            }
        }

        return SolverOutcome.NotConverged;
    }

    /// <summary>
    /// The derivative of the optimal weighted sum of squares (half of it) with respect to held quantity
    /// <paramref name="h"/>, through the balances only: the multiplier of the constraint that holds it. The caller adds
    /// (value - reading) / sigma^2 when the quantity is a measurement held at a bound.
    /// </summary>
    public double HeldMultiplier(int h)
    {
        // With L = J + mu' (Q2' f + B dx), dL/db = mu' Q2' a_b over the projected rows the Cholesky kept.
        ReadOnlySpan<double> a = _ah.AsSpan(h * _m, _m);
        double sum = 0;
        for (int i = 0; i < _q; i++)
        {
            sum += _mu[i] * a[_rank + _gsel[i]];
        }

        return sum;
    }

    private void SetMeasuredToReadings()
    {
        _balancesCurrent = false;
        for (int i = 0; i < _nx; i++)
        {
            _z[_varOfMeasurement[i]] = _y[i];
        }

        for (int h = 0; h < _nh; h++)
        {
            _z[_varOfHeld[h]] = _heldValue[h];
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
            int flowColumn = _column[s * _stride];
            flowKnown[s] = flowColumn >= 0 || flowColumn == Held;
            if (flowColumn >= 0)
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
                if (_column[v] >= 0 || _column[v] == Held)
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
                    if (_column[v] < 0 && _column[v] != Held)
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
        _startFlowScale = 0;
        for (int s = 0; s < ns; s++)
        {
            _startFlowScale = Math.Max(_startFlowScale, Math.Abs(_z[s * _stride]));
        }
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

        if (col == Held)
        {
            _ah[(_heldIndex[variable] * _m) + row] += value;
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
        Array.Clear(_ah);
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

    // A node balance is judged relative to the sum of its absolute terms, but never to less than a hundredth of the
    // largest such sum or of the largest flow read or held: a balance of streams near zero flow (streams held at zero)
    // carries the roundoff of the large readings.
    private double RelativeResidual()
    {
        EvaluateBalances();
        int nodeRows = _nc == 0 ? _network.Nodes.Count : _network.Nodes.Count * _nc;
        double largest = 0;
        for (int i = 0; i < nodeRows; i++)
        {
            largest = Math.Max(largest, _scale[i]);
        }

        for (int k = 0; k < _nx; k++)
        {
            if (_varOfMeasurement[k] % _stride == 0)
            {
                largest = Math.Max(largest, Math.Abs(_y[k]));
            }
        }

        for (int h = 0; h < _nh; h++)
        {
            if (_varOfHeld[h] % _stride == 0)
            {
                largest = Math.Max(largest, Math.Abs(_heldValue[h]));
            }
        }

        double floor = largest > 0 ? 1e-2 * largest : 1;
        double worst = 0;
        for (int i = 0; i < _m; i++)
        {
            double scale = i < nodeRows ? Math.Max(_scale[i], floor) : _scale[i] > 0 ? _scale[i] : 1;
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
        _rank = PivotedHouseholderQr.Factor(
            _au, _m, _nu, _v, _tau, _norm0, _perm, _column1, _useMasks ? _maskAu : [], _useMasks ? _maskV : [], RankTolerance);
        if (!_useMasks)
        {
            Array.Fill(_maskV, ulong.MaxValue);
        }
    }

    private void ApplyQTranspose(Span<double> column) => PivotedHouseholderQr.ApplyQTranspose(_v, _tau, _m, _rank, column);

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

        for (int h = 0; h < _nh; h++)
        {
            ApplyQTranspose(_ah.AsSpan(h * m, m));
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

        for (int i = 0; i < p; i++)
        {
            for (int j = 0; j < i; j++)
            {
                g[(j * p) + i] = g[(i * p) + j];
            }
        }

        _q = PivotedCholesky.Factor(g, p, _diag0, _gsel, PivotTolerance);

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

    private void ForwardSolve(Span<double> x) => PivotedCholesky.ForwardSolve(_w, _p, _q, x);

    private void BackSolve(Span<double> x) => PivotedCholesky.BackSolve(_w, _p, _q, x);

    // Solves R11 x = b in place (R from the QR of the unmeasured columns, pivoted order).
    private void SolveR(Span<double> x) => PivotedHouseholderQr.SolveR(_au, _m, _rank, x);

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

        // Flows are judged against the larger of the current and the starting flow scale: a network whose flows are
        // free in scale (no flow measured) may drift towards zero flows, where a scale of the moment never settles.
        flowScale = Math.Max(flowScale, _startFlowScale);
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
        Span<double> full = _duFull.AsSpan(0, _nu);
        full.Clear();
        du.CopyTo(full);
        if (r < _nu && _nc > 0)
        {
            MinimumNormStep(full, flowScale);
        }

        for (int i = 0; i < _nu; i++)
        {
            int variable = _varOfUnmeasured[_perm[i]];
            _z[variable] += full[i];
            step = Math.Max(step, Math.Abs(full[i]) / ScaleOf(variable, flowScale));
        }

        for (int k = 0; k < _nx; k++)
        {
            _z[_varOfMeasurement[k]] = _xNew[k];
        }

        UpdateDependents();
        _balancesCurrent = false;
        return step;
    }

    // The step of the unmeasured quantities of least scaled norm (flows in units of the flow scale, fractions as they
    // are) among all steps that solve the linearised balances: the basic solution (free columns held) plus the null-space
    // component that makes it shortest. A basic solution moves unobservable quantities by whatever the pivoting of the
    // moment asks, so that they drift from one linearisation to the next (to fractions of 1e13 and flows below zero)
    // and the iteration never settles; the least-norm step leaves them where they are unless the balances need them.
    // Gauss-Newton for an underdetermined system, as in Ben-Israel, J. Math. Anal. Appl. 15 (1966) 243-252.
    private void MinimumNormStep(Span<double> du, double flowScale)
    {
        int m = _m;
        int r = _rank;
        int nf = _nu - r;

        // Null-space basis in scaled variables: column f is D^-1 [-R11^-1 R12 e_f; e_f] (pivoted order).
        Span<double> basis = _nullBasis.AsSpan(0, _nu * nf);
        for (int f = 0; f < nf; f++)
        {
            Span<double> n = basis.Slice(f * _nu, _nu);
            n.Clear();
            Span<double> top = n[..r];
            _au.AsSpan((r + f) * m, r).CopyTo(top);
            SolveR(top);
            for (int i = 0; i < r; i++)
            {
                top[i] = -top[i];
            }

            n[r + f] = 1;
            for (int i = 0; i < _nu; i++)
            {
                n[i] /= ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
            }
        }

        // w0 = D^-1 du; w = w0 - N (N'N)^-1 N' w0; du = D w.
        Span<double> w0 = _wScaled.AsSpan(0, _nu);
        for (int i = 0; i < _nu; i++)
        {
            w0[i] = du[i] / ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
        }

        Span<double> gram = _gram.AsSpan(0, nf * nf);
        Span<double> rhs = _gramRhs.AsSpan(0, nf);
        for (int f = 0; f < nf; f++)
        {
            ReadOnlySpan<double> nfCol = basis.Slice(f * _nu, _nu);
            rhs[f] = DenseKernels.Dot(nfCol, w0);
            for (int g = 0; g <= f; g++)
            {
                double value = DenseKernels.Dot(nfCol, basis.Slice(g * _nu, _nu));
                gram[(f * nf) + g] = value;
                gram[(g * nf) + f] = value;
            }
        }

        // N has full column rank (the identity block), so N'N is positive definite.
        if (!DenseCholesky.Factor(gram, nf))
        {
            return;
        }

        DenseCholesky.Solve(gram, nf, rhs);
        for (int f = 0; f < nf; f++)
        {
            DenseKernels.Axpy(-rhs[f], basis.Slice(f * _nu, _nu), w0);
        }

        for (int i = 0; i < _nu; i++)
        {
            du[i] = w0[i] * ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
        }
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

                if (col == Held)
                {
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
}

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
internal sealed partial class ReconciliationSolver
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
    private double[]? _accumulation;

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
        PrepareBand();
    }

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

    /// <summary>Sets the known accumulation per node balance row (node x component), or none for steady state.</summary>
    public void SetAccumulation(double[]? rows)
    {
        if (!ReferenceEquals(rows, _accumulation))
        {
            _accumulation = rows;
            _balancesCurrent = false;
        }
    }
}

using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <content>
/// The banded step for long trains. The linearised problem's optimality conditions form one sparse symmetric system
/// in the scaled adjustments t = S^-1/2 dx, the unmeasured steps du and the multipliers of the balances:
/// [I, 0, S^1/2 Ax'; 0, 0, Au'; Ax S^1/2, Au, 0] [t; du; lambda] = [S^-1/2 (y - x); 0; -f]. A train is a chain: with
/// its unknowns in reverse Cuthill-McKee order the system is banded with a width set by a few stages, so Gaussian
/// elimination with partial pivoting on the band (<see cref="BandedLinear"/>) costs time linear in the stage count,
/// where the projection costs the square of it and more. In exact arithmetic the step is the projection's step
/// whenever the unmeasured columns have full rank and the projected balances are independent; the banded step is
/// used only for layouts where a dense factorisation has shown that (the first solve of a layout starts dense). A
/// solve whose steps were banded closes on the band as well (the classification and covariance by QR and selected
/// inversion, ReconciliationSolver.BandedCovariance.cs); only when that finds the band near singular does it close with
/// one dense factorisation, and when that finds the layout rank deficient after all, the solve is repeated on the
/// dense path.
/// </content>
internal sealed partial class ReconciliationSolver
{
    // Unknowns of the banded system: t_k at k, du_j at _nx + j, lambda_i at _nx + _nu + i; _order[unknown] is the
    // position in the band. The Jacobian's structural nonzeros: _patternRow[e], _patternColumn[e] (measured k, or ~j
    // for unmeasured j).
    private int[]? _order;
    private int[] _patternRow = [];
    private int[] _patternColumn = [];
    private BandedLinear? _band;
    private double[] _bandRhs = [];
    private double[] _zPrevious = [];

    // Whether a dense factorisation of this layout has found full column rank of the unmeasured columns and
    // independent projected balances (the banded step's condition).
    private bool _bandTrusted;

    // Whether every nonzero of _ax and _au lies in the pattern (they hold a Jacobian, not a dense factorisation's blocks).
    private bool _jacobianInPattern;

    /// <summary>Whether this layout solves its steps on the band (for the tests and the benchmarks).</summary>
    internal bool UsesBand => _order is not null;

    // Called at the end of the constructor: lays out the banded system when it is much cheaper than the projection.
    private void PrepareBand()
    {
        if (_nc == 0 || _options.DenseReference || _nu == 0)
        {
            return;
        }

        // The structure of the Jacobian does not depend on the point: find it at a point with no zero.
        for (int v = 0; v < _n; v++)
        {
            _z[v] = 1 + (1e-3 * (v % 97));
        }

        FillJacobian();
        var rows = new List<int>();
        var columns = new List<int>();
        for (int k = 0; k < _nx; k++)
        {
            for (int i = 0; i < _m; i++)
            {
                if (_ax[(k * _m) + i] != 0)
                {
                    rows.Add(i);
                    columns.Add(k);
                }
            }
        }

        for (int j = 0; j < _nu; j++)
        {
            for (int i = 0; i < _m; i++)
            {
                if (_au[(j * _m) + i] != 0)
                {
                    rows.Add(i);
                    columns.Add(~j);
                }
            }
        }

        Array.Clear(_z);
        int n = _nx + _nu + _m;
        var adjacency = new List<int>[n];
        for (int u = 0; u < n; u++)
        {
            adjacency[u] = [];
        }

        for (int e = 0; e < rows.Count; e++)
        {
            int a = columns[e] >= 0 ? columns[e] : _nx + ~columns[e];
            int b = _nx + _nu + rows[e];
            adjacency[a].Add(b);
            adjacency[b].Add(a);
        }

        int[] order = ReverseCuthillMcKee(adjacency);
        int width = 0;
        for (int e = 0; e < rows.Count; e++)
        {
            int a = columns[e] >= 0 ? columns[e] : _nx + ~columns[e];
            width = Math.Max(width, Math.Abs(order[a] - order[_nx + _nu + rows[e]]));
        }

        // Elimination on the band costs about 3 n w^2, the projection about m nu (nu + nx) per step; the band's close
        // (QR and selected inverse, a few eliminations' worth) against the dense one (its cube) tips the balance to
        // the band from about 12 stages of a train.
        double banded = 3.0 * n * width * width;
        double dense = (double)_m * _nu * (_nu + _nx);
        if (!(banded < dense))
        {
            return;
        }

        _order = order;
        _patternRow = [.. rows];
        _patternColumn = [.. columns];
        _band = new BandedLinear(n, width, width);
        _bandRhs = new double[n];
        _zPrevious = new double[_n];
        PrepareBandedCovariance(width);
    }

    // Positions of the nodes of a graph in reverse Cuthill-McKee order, each component from a node of least degree.
    private static int[] ReverseCuthillMcKee(List<int>[] adjacency)
    {
        int n = adjacency.Length;
        var visited = new bool[n];
        var sequence = new List<int>(n);
        int[] byDegree = [.. Enumerable.Range(0, n).OrderBy(u => adjacency[u].Count).ThenBy(u => u)];
        var queue = new Queue<int>();
        foreach (int start in byDegree)
        {
            if (visited[start])
            {
                continue;
            }

            visited[start] = true;
            queue.Enqueue(start);
            while (queue.Count > 0)
            {
                int u = queue.Dequeue();
                sequence.Add(u);
                foreach (int w in adjacency[u].Where(w => !visited[w]).Distinct().OrderBy(w => adjacency[w].Count).ThenBy(w => w))
                {
                    visited[w] = true;
                    queue.Enqueue(w);
                }
            }
        }

        var position = new int[n];
        for (int i = 0; i < n; i++)
        {
            position[sequence[n - 1 - i]] = i;
        }

        return position;
    }

    // One linearisation step on the band; false when the banded system is singular to working precision (the caller
    // then takes the dense step from the same point).
    private bool BandedStep(out double step)
    {
        step = double.NaN;
        AssembleBand();
        if (!_band!.Solve(_bandRhs))
        {
            return false;
        }

        step = ApplyBandedStep();
        return true;
    }

    // The optimality conditions linearised at the current point, into the band and its right-hand side.
    private void AssembleBand()
    {
        int m = _m;
        int[] order = _order!;
        BandedLinear band = _band!;
        FillJacobian();
        if (!_balancesCurrent)
        {
            EvaluateBalances();
        }

        band.Clear();
        double[] rhs = _bandRhs;
        Array.Clear(rhs);
        for (int k = 0; k < _nx; k++)
        {
            int p = order[k];
            double s = Math.Sqrt(_sigma2[k]);
            band.Set(p, p, 1.0);
            rhs[p] = (_y[k] - _z[_varOfMeasurement[k]]) / s;
        }

        for (int e = 0; e < _patternRow.Length; e++)
        {
            int i = _patternRow[e];
            int c = _patternColumn[e];
            double value;
            int unknown;
            if (c >= 0)
            {
                value = _ax[(c * m) + i] * Math.Sqrt(_sigma2[c]);
                unknown = c;
            }
            else
            {
                value = _au[(~c * m) + i];
                unknown = _nx + ~c;
            }

            int a = order[unknown];
            int b = order[_nx + _nu + i];
            band.Set(a, b, value);
            band.Set(b, a, value);
        }

        for (int i = 0; i < m; i++)
        {
            rhs[order[_nx + _nu + i]] = -_f[i];
        }
    }

    // Takes the step solved on the band; returns the largest relative change.
    private double ApplyBandedStep()
    {
        int[] order = _order!;
        double[] rhs = _bandRhs;
        double flowScale = StepFlowScale();
        double largest = 0;
        for (int k = 0; k < _nx; k++)
        {
            double dx = rhs[order[k]] * Math.Sqrt(_sigma2[k]);
            int variable = _varOfMeasurement[k];
            _dx[k] = dx;
            largest = Math.Max(largest, Math.Abs(dx) / ScaleOf(variable, flowScale));
        }

        for (int j = 0; j < _nu; j++)
        {
            double du = rhs[order[_nx + j]];
            int variable = _varOfUnmeasured[j];
            largest = Math.Max(largest, Math.Abs(du) / ScaleOf(variable, flowScale));
            _z[variable] += du;
        }

        for (int k = 0; k < _nx; k++)
        {
            _z[_varOfMeasurement[k]] += _dx[k];
        }

        UpdateDependents();
        _balancesCurrent = false;
        return largest;
    }

    // After a dense factorisation: whether the banded step's condition holds for this layout.
    private bool DenseFactorizationIsRegular() => _rank == _nu && _q == _p;
}

using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <content>The linearised balances and their factorisations: the Jacobian, the QR projection of the unmeasured quantities and the Cholesky factor of the projected system.</content>
internal sealed partial class ReconciliationSolver
{
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
        // The Jacobian's nonzeros lie in the pattern of the band, until a dense factorisation overwrites the blocks.
        if (_jacobianInPattern)
        {
            for (int e = 0; e < _patternRow.Length; e++)
            {
                int c = _patternColumn[e];
                if (c >= 0)
                {
                    _ax[(c * _m) + _patternRow[e]] = 0;
                }
                else
                {
                    _au[(~c * _m) + _patternRow[e]] = 0;
                }
            }
        }
        else
        {
            Array.Clear(_ax);
            Array.Clear(_au);
        }

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

        _jacobianInPattern = _order is not null;
    }

    // Linearises at the current point, projects the unmeasured quantities out and factorises the projected system.
    private void Factorize()
    {
        FillJacobian();
        _jacobianInPattern = false;
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
}

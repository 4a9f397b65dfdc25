using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <content>The linearised covariance and the classification of a solution.</content>
internal sealed partial class ReconciliationSolver
{
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

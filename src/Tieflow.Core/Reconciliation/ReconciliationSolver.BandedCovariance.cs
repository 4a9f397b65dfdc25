using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <content>
/// The classification and covariance of a solution whose steps were banded, from the band as well. With the unknowns
/// z = (t, du) and K the matrix of the banded step, the linearised covariance of the scaled estimates is the z block
/// of K^-1 (the block M satisfies M = M diag(I, 0) M, so M M_t' = M): the variance of reconciled measurement k is
/// sigma_k^2 M_kk, of its adjustment sigma_k^2 (1 - M_kk), of unmeasured quantity j M_jj, and a substituted fraction
/// (one minus its siblings) has g' M g over its siblings. Only entries of K^-1 near the diagonal of the band are
/// needed. With K = Q R on the band, K^-1 = (R'R)^-1 K, and the entries of S = (R'R)^-1 within a band around the
/// diagonal follow from R alone by Takahashi's recurrence: time linear in the stage count, where the dense
/// factorisation costs its cube. A layout is closed this way only when a dense factorisation has found it regular
/// (every unmeasured quantity observable, the projected balances independent: K nonsingular), and the degrees of
/// freedom are then the balances less the unmeasured quantities; when R shows K near singular the solve closes on the
/// dense path as before.
/// </content>
internal sealed partial class ReconciliationSolver
{
    // R's smallest diagonal relative to its largest below which the band does not close a solve.
    private const double BandConditionTolerance = 1e-8;

    // Per scaled unknown of z (t_k at k, du_j at _nx + j): the pattern entries of its column, _zEntry[_zStart[u]..].
    private int[] _zStart = [];
    private int[] _zEntry = [];

    // Entries of S = (R'R)^-1 up to _sigmaWidth either side of the diagonal, row-wise; _lambda the balances' multipliers
    // of the last banded close.
    private double[] _sigmaBand = [];
    private int _sigmaWidth;
    private double[] _lambda = [];

    // Whether the last solution was closed on the band (its multipliers are in _lambda, not in _mu).
    private bool _closedOnBand;

    /// <summary>Whether the last solve closed on the band (for the tests).</summary>
    internal bool ClosedOnBand => _closedOnBand;

    private void PrepareBandedCovariance(int width)
    {
        int nz = _nx + _nu;
        _zStart = new int[nz + 1];
        foreach (int c in _patternColumn)
        {
            _zStart[(c >= 0 ? c : _nx + ~c) + 1]++;
        }

        for (int u = 0; u < nz; u++)
        {
            _zStart[u + 1] += _zStart[u];
        }

        _zEntry = new int[_patternColumn.Length];
        int[] fill = [.. _zStart];
        for (int e = 0; e < _patternColumn.Length; e++)
        {
            int c = _patternColumn[e];
            _zEntry[fill[c >= 0 ? c : _nx + ~c]++] = e;
        }

        // M_ab needs S(a, j) for j within the band of b: the band of S must cover R's (twice the width) and the
        // distance between siblings of a substituted fraction plus the width.
        int span = 0;
        for (int s = 0; s < _dependentOf.Length; s++)
        {
            if (_dependentOf[s] < 0)
            {
                continue;
            }

            int low = int.MaxValue;
            int high = int.MinValue;
            for (int c = 0; c < _nc; c++)
            {
                int u = UnknownOf((s * _stride) + 1 + c);
                if (u >= 0)
                {
                    low = Math.Min(low, _order![u]);
                    high = Math.Max(high, _order![u]);
                }
            }

            span = Math.Max(span, high - low);
        }

        int n = _nx + _nu + _m;
        _sigmaWidth = Math.Min(Math.Max(2 * width, span + width), n - 1);
        _sigmaBand = new double[n * ((2 * _sigmaWidth) + 1)];
        _lambda = new double[_m];
    }

    // The unknown of z a network position is (a measured or unmeasured column), or -1.
    private int UnknownOf(int variable)
    {
        int col = _column[variable];
        return col >= 0 ? col : col > Unassigned && col < 0 ? _nx + ~col : -1;
    }

    // At the point of the last banded step of a converged solve: the step again (by QR on the band), the
    // classification, the covariance and the multipliers. False when the band is too near singular to close on.
    private bool BandedClose(out double step)
    {
        step = double.NaN;
        AssembleBand();
        if (!_band!.SolveByQr(_bandRhs, BandConditionTolerance))
        {
            return false;
        }

        _band.NormalInverseBand(_sigmaBand, _sigmaWidth);
        int[] order = _order!;
        for (int i = 0; i < _m; i++)
        {
            _lambda[i] = _bandRhs[order[_nx + _nu + i]];
        }

        _redundantCount = 0;
        for (int k = 0; k < _nx; k++)
        {
            double s2 = _sigma2[k];
            double va = s2 * AdjustmentVarianceOf(k);
            _redundant[k] = va > RedundancyTolerance * s2;
            if (_redundant[k])
            {
                _redundantCount++;
            }
            else
            {
                va = 0;
            }

            _varAdjustment[k] = Math.Min(va, s2);
            _varMeasured[k] = Math.Max(0, s2 - va);
        }

        for (int j = 0; j < _nu; j++)
        {
            _positionOf[j] = j;
            _observable[j] = true;
            _varUnmeasured[j] = Math.Max(0, CovarianceOf(_nx + j, _nx + j));
        }

        for (int s = 0; s < _dependentOf.Length; s++)
        {
            if (_dependentOf[s] < 0)
            {
                continue;
            }

            // x_d = 1 - (sum of the siblings): in the scaled unknowns g is -sigma_k for a measured sibling and -1 for an
            // unmeasured one (a held sibling does not vary).
            double variance = 0;
            for (int c = 0; c < _nc; c++)
            {
                int a = UnknownOf((s * _stride) + 1 + c);
                if (a < 0)
                {
                    continue;
                }

                for (int d = 0; d < _nc; d++)
                {
                    int b = UnknownOf((s * _stride) + 1 + d);
                    if (b >= 0)
                    {
                        variance += ScaleOfUnknown(a) * ScaleOfUnknown(b) * CovarianceOf(a, b);
                    }
                }
            }

            _varDependent[s] = Math.Max(0, variance);
        }

        _rank = _nu;
        _p = _m - _nu;
        _q = _p;
        _closedOnBand = true;
        step = ApplyBandedStep();
        return true;
    }

    private double ScaleOfUnknown(int u) => u < _nx ? Math.Sqrt(_sigma2[u]) : 1.0;

    // (K^-1)_ab for any unknown a and an unknown b of z: with D K D = Q R, K^-1 = D (R'R)^-1 (D K D) D, so
    // (K^-1)_ab = d_a d_b^2 sum over j of S(a, j) d_j K(j, b).
    private double CovarianceOf(int a, int b)
    {
        int[] order = _order!;
        BandedLinear band = _band!;
        int pa = order[a];
        int pb = order[b];
        double sum = b < _nx ? SigmaAt(pa, pb) * band.ScaleAt(pb) : 0;
        double scale = b < _nx ? Math.Sqrt(_sigma2[b]) : 1.0;
        int m = _m;
        for (int x = _zStart[b]; x < _zStart[b + 1]; x++)
        {
            int e = _zEntry[x];
            int i = _patternRow[e];
            int c = _patternColumn[e];
            double value = c >= 0 ? _ax[(c * m) + i] * scale : _au[(~c * m) + i];
            int pj = order[_nx + _nu + i];
            sum += SigmaAt(pa, pj) * band.ScaleAt(pj) * value;
        }

        double db = band.ScaleAt(pb);
        return band.ScaleAt(pa) * db * db * sum;
    }

    // The variance of the scaled adjustment of measurement k, (I - M_tt)_kk = sum over the balances i of
    // K(t_k, lambda_i) (K^-1)(lambda_i, t_k) (the t rows of K K^-1 = I), free of the cancellation in 1 - M_kk.
    private double AdjustmentVarianceOf(int k)
    {
        double scale = Math.Sqrt(_sigma2[k]);
        double sum = 0;
        for (int x = _zStart[k]; x < _zStart[k + 1]; x++)
        {
            int e = _zEntry[x];
            int i = _patternRow[e];
            sum += _ax[(k * _m) + i] * scale * CovarianceOf(_nx + _nu + i, k);
        }

        return sum;
    }

    private double SigmaAt(int i, int j) => _sigmaBand[(i * ((2 * _sigmaWidth) + 1)) + (j - i + _sigmaWidth)];
}

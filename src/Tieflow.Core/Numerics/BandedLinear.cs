namespace Tieflow.Core.Numerics;

/// <summary>
/// Gaussian elimination with partial pivoting on a banded matrix (kl sub-diagonals, ku super-diagonals), in the
/// storage of LAPACK's gbsv: row i keeps columns i - kl to i + ku + kl, the extra kl columns for the fill-in of row
/// swaps. Cost O(n kl (kl + ku)), so long cascades solve in time linear in their stage count.
/// </summary>
internal sealed class BandedLinear
{
    private readonly int _n;
    private readonly int _kl;
    private readonly int _ku;
    private readonly int _width;
    private readonly double[] _a;

    public BandedLinear(int n, int kl, int ku)
    {
        _n = n;
        _kl = kl;
        _ku = ku;
        _width = (2 * kl) + ku + 1;
        _a = new double[n * _width];
    }

    public void Clear() => Array.Clear(_a);

    /// <summary>Sets element (i, j); j must lie within i - kl to i + ku.</summary>
    public void Set(int i, int j, double value) => _a[(i * _width) + (j - i + _kl)] = value;

    public double Get(int i, int j) => _a[(i * _width) + (j - i + _kl)];

    /// <summary>Solves A x = b in place (x into b, A overwritten); false when A is singular to working precision.</summary>
    public bool Solve(double[] b)
    {
        double scale = 0;
        foreach (double v in _a)
        {
            scale = Math.Max(scale, Math.Abs(v));
        }

        double tiny = 1e-14 * scale;
        for (int k = 0; k < _n; k++)
        {
            int lastRow = Math.Min(k + _kl, _n - 1);
            int lastCol = Math.Min(k + _kl + _ku, _n - 1);
            int pivot = k;
            double best = Math.Abs(Get(k, k));
            for (int i = k + 1; i <= lastRow; i++)
            {
                double v = Math.Abs(Get(i, k));
                if (v > best)
                {
                    best = v;
                    pivot = i;
                }
            }

            if (!(best > tiny))
            {
                return false;
            }

            if (pivot != k)
            {
                for (int j = k; j <= lastCol; j++)
                {
                    double t = Get(k, j);
                    Set(k, j, Get(pivot, j));
                    Set(pivot, j, t);
                }

                (b[k], b[pivot]) = (b[pivot], b[k]);
            }

            double diag = Get(k, k);
            for (int i = k + 1; i <= lastRow; i++)
            {
                double factor = Get(i, k) / diag;
                if (factor == 0)
                {
                    continue;
                }

                for (int j = k + 1; j <= lastCol; j++)
                {
                    _a[(i * _width) + (j - i + _kl)] -= factor * Get(k, j);
                }

                b[i] -= factor * b[k];
            }
        }

        for (int i = _n - 1; i >= 0; i--)
        {
            double sum = b[i];
            int lastCol = Math.Min(i + _kl + _ku, _n - 1);
            for (int j = i + 1; j <= lastCol; j++)
            {
                sum -= Get(i, j) * b[j];
            }

            b[i] = sum / Get(i, i);
        }

        return true;
    }
}

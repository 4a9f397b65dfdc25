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
    private readonly double[] _d;

    public BandedLinear(int n, int kl, int ku)
    {
        _n = n;
        _kl = kl;
        _ku = ku;
        _width = (2 * kl) + ku + 1;
        _a = new double[n * _width];
        _d = new double[n];
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
    /// <summary>
    /// Solves A x = b in place by Householder QR on the band (x into b); A is overwritten by R, upper triangular with
    /// kl + ku super-diagonals, kept for <see cref="NormalInverseBand"/>. False when a diagonal of R falls below
    /// <paramref name="relativeTolerance"/> times the largest (A singular or too near it to trust).
    /// </summary>
    public bool SolveByQr(double[] b, double relativeTolerance)
    {
        int w = _width;
        int kl = _kl;
        double[] a = _a;
        Equilibrate();
        for (int i = 0; i < _n; i++)
        {
            b[i] *= _d[i];
        }

        Span<double> v = stackalloc double[kl + 1];
        double largest = 0;
        double smallest = double.PositiveInfinity;
        for (int k = 0; k < _n; k++)
        {
            int lastRow = Math.Min(k + kl, _n - 1);
            int lastCol = Math.Min(k + kl + _ku, _n - 1);
            int len = lastRow - k + 1;
            double norm2 = 0;
            for (int r = 0; r < len; r++)
            {
                double x = a[((k + r) * w) + kl - r];
                v[r] = x;
                norm2 += x * x;
            }

            double norm = Math.Sqrt(norm2);
            double alpha = v[0] > 0 ? -norm : norm;
            if (norm > 0 && len > 1)
            {
                v[0] -= alpha;
                double vv = norm2 - (2 * alpha * (v[0] + alpha)) + (alpha * alpha);
                if (vv > 0)
                {
                    double beta = 2 / vv;
                    for (int j = k + 1; j <= lastCol; j++)
                    {
                        double s = 0;
                        int index = (k * w) + j - k + kl;
                        for (int r = 0; r < len; r++)
                        {
                            s += v[r] * a[index];
                            index += w - 1;
                        }

                        s *= beta;
                        if (s == 0)
                        {
                            continue;
                        }

                        index = (k * w) + j - k + kl;
                        for (int r = 0; r < len; r++)
                        {
                            a[index] -= s * v[r];
                            index += w - 1;
                        }
                    }

                    double sb = 0;
                    for (int r = 0; r < len; r++)
                    {
                        sb += v[r] * b[k + r];
                    }

                    sb *= beta;
                    for (int r = 0; r < len; r++)
                    {
                        b[k + r] -= sb * v[r];
                    }

                    for (int r = 1; r < len; r++)
                    {
                        a[((k + r) * w) + kl - r] = 0;
                    }

                    a[(k * w) + kl] = alpha;
                }
            }

            double d = Math.Abs(a[(k * w) + kl]);
            largest = Math.Max(largest, d);
            smallest = Math.Min(smallest, d);
        }

        if (!(smallest > relativeTolerance * largest))
        {
            return false;
        }

        int upper = kl + _ku;
        for (int i = _n - 1; i >= 0; i--)
        {
            double sum = b[i];
            int lastCol = Math.Min(i + upper, _n - 1);
            int rowBase = (i * w) - i + kl;
            for (int j = i + 1; j <= lastCol; j++)
            {
                sum -= a[rowBase + j] * b[j];
            }

            b[i] = sum / a[rowBase + i];
        }

        for (int i = 0; i < _n; i++)
        {
            b[i] *= _d[i];
        }

        return true;
    }

    /// <summary>After <see cref="SolveByQr"/>: the scaling d of the rows and columns, R being the factor of D A D.</summary>
    public double ScaleAt(int i) => _d[i];

    // Symmetric equilibration (a few sweeps of Ruiz's scaling, d_i = 1 / sqrt(largest |a_ij| of row i)) of a symmetric
    // band: D A D with rows and columns of largest entry near one, for the conditioning of the QR and the inverse.
    private void Equilibrate()
    {
        int w = _width;
        int kl = _kl;
        double[] a = _a;
        Span<double> f = _n <= 1024 ? stackalloc double[_n] : new double[_n];
        Array.Fill(_d, 1.0);
        for (int sweep = 0; sweep < 3; sweep++)
        {
            for (int i = 0; i < _n; i++)
            {
                double largest = 0;
                int first = Math.Max(0, i - kl);
                int last = Math.Min(_n - 1, i + _ku);
                for (int j = first; j <= last; j++)
                {
                    largest = Math.Max(largest, Math.Abs(a[(i * w) + j - i + kl]));
                }

                f[i] = largest > 0 ? 1 / Math.Sqrt(largest) : 1;
                _d[i] *= f[i];
            }

            for (int i = 0; i < _n; i++)
            {
                int first = Math.Max(0, i - kl);
                int last = Math.Min(_n - 1, i + _ku);
                for (int j = first; j <= last; j++)
                {
                    a[(i * w) + j - i + kl] *= f[i] * f[j];
                }
            }
        }
    }

    /// <summary>
    /// After <see cref="SolveByQr"/>: the entries (R'R)^-1 = (D A D)^-2 (i, j) for j = i to i + <paramref name="band"/> (band at
    /// least kl + ku) into <paramref name="sigma"/>, row i at i * (band + 1) + (j - i), by the recurrence of Takahashi,
    /// Fagan and Chin (1973) on R: R S = R^-T, whose upper triangle is diagonal, read from the last row up. Cost
    /// O(n band (kl + ku)), linear in n, though the inverse itself is full.
    /// </summary>
    public void NormalInverseBand(double[] sigma, int band)
    {
        int w = _width;
        int kl = _kl;
        int upper = kl + _ku;
        int stride = band + 1;
        double[] a = _a;
        for (int i = _n - 1; i >= 0; i--)
        {
            int rowBase = (i * w) - i + kl;
            double rii = a[rowBase + i];
            int lastK = Math.Min(i + upper, _n - 1);
            int lastJ = Math.Min(i + band, _n - 1);
            for (int j = lastJ; j >= i; j--)
            {
                double s = j == i ? 1 / rii : 0;
                for (int k = i + 1; k <= lastK; k++)
                {
                    double rik = a[rowBase + k];
                    if (rik == 0)
                    {
                        continue;
                    }

                    s -= rik * (k <= j ? sigma[(k * stride) + j - k] : sigma[(j * stride) + k - j]);
                }

                sigma[(i * stride) + j - i] = s / rii;
            }
        }
    }
}

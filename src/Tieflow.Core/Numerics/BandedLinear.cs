namespace Tieflow.Core.Numerics;

/// <summary>
/// Gaussian elimination with partial pivoting on a banded matrix (kl sub-diagonals, ku super-diagonals), in the
/// storage of LAPACK's gbsv: row i keeps columns i - kl to i + ku + kl, the extra kl columns for the fill-in of row
/// swaps. Cost O(n kl (kl + ku)), so long cascades solve in time linear in their stage count. A symmetric band can
/// instead be solved by Householder QR after a symmetric equilibration, which keeps R for the entries of the inverse
/// near the diagonal (<see cref="NormalInverseBand"/>), in time linear in n as well.
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

            // Row i's columns k to lastCol are contiguous in the storage.
            int count = lastCol - k + 1;
            if (pivot != k)
            {
                Span<double> rowK = _a.AsSpan((k * _width) + _kl, count);
                Span<double> rowP = _a.AsSpan((pivot * _width) + (k - pivot + _kl), count);
                for (int j = 0; j < count; j++)
                {
                    (rowK[j], rowP[j]) = (rowP[j], rowK[j]);
                }

                (b[k], b[pivot]) = (b[pivot], b[k]);
            }

            double diag = Get(k, k);
            ReadOnlySpan<double> pivotRow = _a.AsSpan((k * _width) + _kl + 1, count - 1);
            for (int i = k + 1; i <= lastRow; i++)
            {
                double factor = Get(i, k) / diag;
                if (factor == 0)
                {
                    continue;
                }

                DenseKernels.Axpy(-factor, pivotRow, _a.AsSpan((i * _width) + (k + 1 - i + _kl), count - 1));
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
    /// Solves A x = b in place for a symmetric A (kl = ku) by Householder QR of D A D on the band, D the equilibration
    /// (x into b); A is overwritten by R, upper triangular with kl + ku super-diagonals, kept for
    /// <see cref="NormalInverseBand"/>. False when a diagonal of R falls below
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
        Span<double> work = stackalloc double[kl + _ku + 1];
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
                    // H = I - beta v v' on rows k to lastRow, columns k + 1 to lastCol: s = beta v' A, A -= v s'
                    // (each row's columns contiguous in the storage).
                    double beta = 2 / vv;
                    int count = lastCol - k;
                    Span<double> sum = work[..count];
                    sum.Clear();
                    for (int r = 0; r < len; r++)
                    {
                        DenseKernels.Axpy(v[r], a.AsSpan(((k + r) * w) + kl - r + 1, count), sum);
                    }

                    for (int j = 0; j < count; j++)
                    {
                        sum[j] *= beta;
                    }

                    for (int r = 0; r < len; r++)
                    {
                        DenseKernels.Axpy(-v[r], sum, a.AsSpan(((k + r) * w) + kl - r + 1, count));
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
    /// After <see cref="SolveByQr"/>: the entries S(i, j) of S = (R'R)^-1 = (D A D)^-2 for |i - j| up to
    /// <paramref name="band"/> (at least kl + ku), row i at i * (2 band + 1) + (j - i + band), by the recurrence of
    /// Takahashi, Fagan and Chen ("Formation of a sparse bus impedance matrix and its application to short circuit
    /// study", 1973) on R: R S = R^-T, whose upper triangle is diagonal, read from the last row up.
    /// Cost O(n band (kl + ku)), linear in n, though the inverse itself is full.
    /// </summary>
    public void NormalInverseBand(double[] sigma, int band)
    {
        int w = _width;
        int kl = _kl;
        int upper = kl + _ku;
        int stride = (2 * band) + 1;
        double[] a = _a;
        for (int i = _n - 1; i >= 0; i--)
        {
            int rowBase = (i * w) - i + kl;
            double rii = a[rowBase + i];
            int lastK = Math.Min(i + upper, _n - 1);
            int lastJ = Math.Min(i + band, _n - 1);
            int count = lastJ - i;

            // S(i, j) for j > i: -(1 / r_ii) sum over k of r_ik S(k, j), rows k > i done (both sides of their diagonal).
            Span<double> row = sigma.AsSpan((i * stride) + band + 1, count);
            row.Clear();
            for (int k = i + 1; k <= lastK; k++)
            {
                double rik = a[rowBase + k];
                if (rik != 0)
                {
                    DenseKernels.Axpy(-rik, sigma.AsSpan((k * stride) + (i + 1 - k + band), count), row);
                }
            }

            double diagonal = 1 / rii;
            for (int k = i + 1; k <= lastK; k++)
            {
                diagonal -= a[rowBase + k] * row[k - i - 1] / rii;
            }

            for (int j = 0; j < count; j++)
            {
                row[j] /= rii;
            }

            sigma[(i * stride) + band] = diagonal / rii;

            // The lower side of the rows below, for the rows above.
            for (int j = 0; j < count; j++)
            {
                int r = i + 1 + j;
                sigma[(r * stride) + (i - r + band)] = row[j];
            }
        }
    }
}

namespace Tieflow.Core.Equilibrium.Distribution;

/// <summary>
/// Monotone piecewise cubic Hermite interpolation of rising points (Fritsch and Carlson, SIAM J. Numer. Anal. 17,
/// 238, 1980; derivatives by the weighted harmonic mean of Fritsch and Butland, 1984), with linear extrapolation
/// beyond the last point along the last segment's chord, and its inverse.
/// </summary>
internal sealed class MonotoneCubic
{
    private readonly double[] _x;
    private readonly double[] _y;
    private readonly double[] _d;

    public MonotoneCubic(double[] x, double[] y)
    {
        _x = x;
        _y = y;
        int n = x.Length;
        _d = new double[n];
        var h = new double[n - 1];
        var delta = new double[n - 1];
        for (int i = 0; i < n - 1; i++)
        {
            h[i] = x[i + 1] - x[i];
            delta[i] = (y[i + 1] - y[i]) / h[i];
        }

        if (n == 2)
        {
            _d[0] = _d[1] = delta[0];
            return;
        }

        for (int k = 1; k < n - 1; k++)
        {
            if (delta[k - 1] * delta[k] <= 0)
            {
                _d[k] = 0;
            }
            else
            {
                double w1 = (2 * h[k]) + h[k - 1];
                double w2 = h[k] + (2 * h[k - 1]);
                _d[k] = (w1 + w2) / ((w1 / delta[k - 1]) + (w2 / delta[k]));
            }
        }

        _d[0] = EndSlope(h[0], h[1], delta[0], delta[1]);
        _d[n - 1] = EndSlope(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
    }

    public double LastX => _x[^1];

    public double Evaluate(double x)
    {
        int n = _x.Length;
        if (x >= _x[n - 1])
        {
            return _y[n - 1] + ((x - _x[n - 1]) * (_y[n - 1] - _y[n - 2]) / (_x[n - 1] - _x[n - 2]));
        }

        int k = Segment(_x, x);
        return Hermite(k, (x - _x[k]) / (_x[k + 1] - _x[k]));
    }

    /// <summary>The x whose value is y (y at least the first point's value).</summary>
    public double Inverse(double y)
    {
        int n = _x.Length;
        if (y >= _y[n - 1])
        {
            return _x[n - 1] + ((y - _y[n - 1]) * (_x[n - 1] - _x[n - 2]) / (_y[n - 1] - _y[n - 2]));
        }

        int k = Segment(_y, y);
        double h = _x[k + 1] - _x[k];

        // Safeguarded Newton on t in [0, 1]: the cubic rises on the segment, so bisection keeps a bracket.
        double lo = 0, hi = 1, t = (y - _y[k]) / (_y[k + 1] - _y[k]);
        for (int iteration = 0; iteration < 100; iteration++)
        {
            double r = Hermite(k, t) - y;
            if (r > 0)
            {
                hi = t;
            }
            else
            {
                lo = t;
            }

            if (hi - lo < 1e-15 || r == 0)
            {
                break;
            }

            double slope = HermiteSlope(k, t) / h;
            double next = slope > 0 ? t - (r / (slope * h)) : double.NaN;
            if (!(next > lo && next < hi))
            {
                next = 0.5 * (lo + hi);
            }

            if (Math.Abs(next - t) < 1e-15)
            {
                t = next;
                break;
            }

            t = next;
        }

        return _x[k] + (t * h);
    }

    private static double EndSlope(double h0, double h1, double delta0, double delta1)
    {
        double d = (((2 * h0) + h1) * delta0 - (h0 * delta1)) / (h0 + h1);
        if (Math.Sign(d) != Math.Sign(delta0))
        {
            return 0;
        }

        if (Math.Sign(delta0) != Math.Sign(delta1) && Math.Abs(d) > Math.Abs(3 * delta0))
        {
            return 3 * delta0;
        }

        return d;
    }

    private static int Segment(double[] knots, double value)
    {
        int index = Array.BinarySearch(knots, value);
        if (index < 0)
        {
            index = ~index - 1;
        }

        return Math.Clamp(index, 0, knots.Length - 2);
    }

    private double Hermite(int k, double t)
    {
        double h = _x[k + 1] - _x[k];
        double t2 = t * t, t3 = t2 * t;
        return (((2 * t3) - (3 * t2) + 1) * _y[k]) + ((t3 - (2 * t2) + t) * h * _d[k]) + (((-2 * t3) + (3 * t2)) * _y[k + 1]) + ((t3 - t2) * h * _d[k + 1]);
    }

    private double HermiteSlope(int k, double t)
    {
        double h = _x[k + 1] - _x[k];
        double t2 = t * t;
        return (((6 * t2) - (6 * t)) * _y[k]) + (((3 * t2) - (4 * t) + 1) * h * _d[k]) + (((-6 * t2) + (6 * t)) * _y[k + 1]) + (((3 * t2) - (2 * t)) * h * _d[k + 1]);
    }
}

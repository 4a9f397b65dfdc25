namespace Tieflow.Core.Numerics;

/// <summary>
/// Piecewise cubic Hermite interpolation with Fritsch-Carlson derivatives (the shape-preserving "PCHIP" choice:
/// Fritsch and Carlson, SIAM J. Numer. Anal. 17, 238, 1980; end formulas as in Moler, Numerical Computing with
/// MATLAB, 2004, ch. 3). Several value channels share one set of nodes so that a single interval search serves
/// them all. Monotone data stay monotone between nodes, so extremes of the interpolant are node values.
/// Outside the node range the end intervals' cubics are clamped to the end nodes.
/// </summary>
internal sealed class MonotoneCubic
{
    private readonly double[] _x;
    private readonly double[][] _y;
    private readonly double[][] _dLeft;
    private readonly double[][] _dRight;

    // Per channel, per interval: the cubic in s = (t - x_i) / h as c0 + s (c1 + s (c2 + s c3)); and 1 / h per interval.
    private readonly double[][] _coefficients;
    private readonly double[] _inverseWidth;

    public MonotoneCubic(double[] x, params double[][] channels)
        : this(x, false, false, channels)
    {
    }

    /// <summary>
    /// As the plain constructor; an end node flagged as extrapolated (a binary end or plait point estimated from the
    /// data rather than measured) does not bend the interpolant between the measured nodes: derivatives at measured
    /// nodes come from measured nodes only, and the extension interval runs from that derivative (limited to keep it
    /// monotone) to the secant at the extrapolated node.
    /// </summary>
    public MonotoneCubic(double[] x, bool firstExtrapolated, bool lastExtrapolated, params double[][] channels)
    {
        if (x.Length < 2)
        {
            throw new ArgumentException("Expected at least two nodes.", nameof(x));
        }

        for (int i = 1; i < x.Length; i++)
        {
            if (!(x[i] > x[i - 1]))
            {
                throw new ArgumentException($"Nodes must be strictly ascending, but node {i} ({x[i]}) is not above node {i - 1} ({x[i - 1]}).", nameof(x));
            }
        }

        int n = x.Length;
        int first = firstExtrapolated && n >= 3 ? 1 : 0;
        int last = lastExtrapolated && n - first >= 3 ? n - 2 : n - 1;
        _x = (double[])x.Clone();
        _y = new double[channels.Length][];
        _dLeft = new double[channels.Length][];
        _dRight = new double[channels.Length][];
        for (int c = 0; c < channels.Length; c++)
        {
            Preconditions.SameLength(channels[c].Length, n);
            double[] y = (double[])channels[c].Clone();
            _y[c] = y;
            double[] inner = Derivatives(_x[first..(last + 1)], y[first..(last + 1)]);
            var dl = new double[n - 1];
            var dr = new double[n - 1];
            for (int i = first; i < last; i++)
            {
                dl[i] = inner[i - first];
                dr[i] = inner[i + 1 - first];
            }

            if (first == 1)
            {
                double delta = (y[1] - y[0]) / (x[1] - x[0]);
                dl[0] = delta;
                dr[0] = Limited(inner[0], delta);
            }

            if (last == n - 2)
            {
                double delta = (y[n - 1] - y[n - 2]) / (x[n - 1] - x[n - 2]);
                dl[n - 2] = Limited(inner[^1], delta);
                dr[n - 2] = delta;
            }

            _dLeft[c] = dl;
            _dRight[c] = dr;
        }

        _inverseWidth = new double[n - 1];
        _coefficients = new double[channels.Length][];
        for (int i = 0; i < n - 1; i++)
        {
            _inverseWidth[i] = 1 / (x[i + 1] - x[i]);
        }

        for (int c = 0; c < channels.Length; c++)
        {
            double[] k = new double[4 * (n - 1)];
            double[] y = _y[c];
            for (int i = 0; i < n - 1; i++)
            {
                double h = x[i + 1] - x[i];
                double m0 = h * _dLeft[c][i];
                double m1 = h * _dRight[c][i];
                k[4 * i] = y[i];
                k[(4 * i) + 1] = m0;
                k[(4 * i) + 2] = (3 * (y[i + 1] - y[i])) - (2 * m0) - m1;
                k[(4 * i) + 3] = (2 * (y[i] - y[i + 1])) + m0 + m1;
            }

            _coefficients[c] = k;
        }
    }

    public int Count => _x.Length;

    public double First => _x[0];

    public double Last => _x[^1];

    public double Node(int i) => _x[i];

    public double NodeValue(int channel, int i) => _y[channel][i];

    /// <summary>Index i of the interval [x_i, x_i+1] holding t (end intervals for t outside).</summary>
    public int Locate(double t)
    {
        double[] x = _x;
        int lo = 0;
        int hi = x.Length - 1;
        while (hi - lo > 1)
        {
            int mid = (lo + hi) >> 1;
            if (t < x[mid])
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        return lo;
    }

    /// <summary>Value of a channel at t within interval i (t is clamped to the interval).</summary>
    public double Value(int channel, int i, double t)
    {
        double s = (t - _x[i]) * _inverseWidth[i];
        s = s < 0 ? 0 : (s > 1 ? 1 : s);
        double[] k = _coefficients[channel];
        int b = 4 * i;
        return k[b] + (s * (k[b + 1] + (s * (k[b + 2] + (s * k[b + 3])))));
    }

    public double Value(int channel, double t) => Value(channel, Locate(t), t);

    /// <summary>
    /// The first t in [First, Last] where the channel equals target, assuming the channel is monotone on each interval
    /// (true of this interpolant); NaN when no node interval brackets the target.
    /// </summary>
    public double FirstCrossing(int channel, double target)
    {
        double[] y = _y[channel];
        for (int i = 0; i < _x.Length - 1; i++)
        {
            double a = y[i] - target;
            double b = y[i + 1] - target;
            if (a == 0)
            {
                return _x[i];
            }

            if ((a < 0 && b >= 0) || (a > 0 && b <= 0))
            {
                return SolveInInterval(channel, i, target);
            }
        }

        return Math.Abs(y[^1] - target) <= 1e-15 ? _x[^1] : double.NaN;
    }

    private double SolveInInterval(int channel, int i, double target)
    {
        double[] y = _y[channel];
        double f0 = y[i] - target;
        double f1 = y[i + 1] - target;
        if (f1 == 0)
        {
            return _x[i + 1];
        }

        // Newton on the interval's cubic in s = (t - x_i) / h, from the secant guess, kept inside a bracket that
        // shrinks with every evaluation (a step leaving it bisects instead): the cubic is monotone here, so this
        // is safe, and it converges in a handful of evaluations where plain bisection needs fifty.
        double[] k = _coefficients[channel];
        int b = 4 * i;
        double c0 = k[b], c1 = k[b + 1], c2 = k[b + 2], c3 = k[b + 3];
        double h = _x[i + 1] - _x[i];
        double tolerance = 1e-15 * Math.Max(1, Math.Abs(_x[i + 1])) / h;
        bool rising = f1 > f0;
        double lo = 0, hi = 1;
        double s = Math.Clamp(f0 / (f0 - f1), 0, 1);
        for (int n = 0; n < 100; n++)
        {
            double f = c0 + (s * (c1 + (s * (c2 + (s * c3))))) - target;
            if (f == 0)
            {
                break;
            }

            if ((f < 0) == rising)
            {
                lo = s;
            }
            else
            {
                hi = s;
            }

            double slope = c1 + (s * ((2 * c2) + (3 * s * c3)));
            double next = slope != 0 ? s - (f / slope) : double.NaN;
            if (!(next > lo && next < hi))
            {
                next = 0.5 * (lo + hi);
            }

            bool done = Math.Abs(next - s) <= tolerance || hi - lo <= tolerance;
            s = next;
            if (done)
            {
                break;
            }
        }

        return _x[i] + (s * h);
    }

    private static double[] Derivatives(double[] x, double[] y)
    {
        int n = x.Length;
        var d = new double[n];
        var h = new double[n - 1];
        var delta = new double[n - 1];
        for (int k = 0; k < n - 1; k++)
        {
            h[k] = x[k + 1] - x[k];
            delta[k] = (y[k + 1] - y[k]) / h[k];
        }

        if (n == 2)
        {
            d[0] = delta[0];
            d[1] = delta[0];
            return d;
        }

        for (int k = 1; k < n - 1; k++)
        {
            if (delta[k - 1] * delta[k] <= 0)
            {
                d[k] = 0;
            }
            else
            {
                double w1 = (2 * h[k]) + h[k - 1];
                double w2 = h[k] + (2 * h[k - 1]);
                d[k] = (w1 + w2) / ((w1 / delta[k - 1]) + (w2 / delta[k]));
            }
        }

        d[0] = EndDerivative(h[0], h[1], delta[0], delta[1]);
        d[n - 1] = EndDerivative(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
        return d;
    }

    // A derivative kept monotone on an interval with this secant (Fritsch-Carlson: same sign, at most three times it).
    private static double Limited(double d, double delta)
    {
        if (delta == 0 || Math.Sign(d) != Math.Sign(delta))
        {
            return 0;
        }

        return Math.Abs(d) > Math.Abs(3 * delta) ? 3 * delta : d;
    }

    // Three-point end formula, kept shape-preserving: zero when it would point against the end secant, and at most
    // three times that secant when the data turn at the second node.
    private static double EndDerivative(double h0, double h1, double delta0, double delta1)
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
}

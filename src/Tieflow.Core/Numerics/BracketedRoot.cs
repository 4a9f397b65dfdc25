namespace Tieflow.Core.Numerics;

/// <summary>
/// Brent's method (Brent, Algorithms for Minimization without Derivatives, 1973, ch. 4) on a bracket whose ends have
/// function values of opposite sign. Stops on the bracket width only (never on the size of f), so that functions
/// of any scale are solved to the same accuracy in x.
/// </summary>
internal static class BracketedRoot
{
    /// <summary>
    /// Finds a root in [a, b]; false when the ends do not bracket one or the iteration limit is reached. Stops when the
    /// bracket is narrower than <paramref name="tolerance"/> (plus rounding), or when |f| is at most
    /// <paramref name="functionTolerance"/> (default 0: only an exact zero), for callers whose f has a known scale.
    /// </summary>
    public static bool TryFind<TState>(Func<double, TState, double> f, TState state, double a, double b, double fa, double fb, double tolerance, int maxIterations, out double root, out int iterations, double functionTolerance = 0)
    {
        iterations = 0;
        if (fa == 0)
        {
            root = a;
            return true;
        }

        if (fb == 0)
        {
            root = b;
            return true;
        }

        if (!(fa * fb < 0))
        {
            root = double.NaN;
            return false;
        }

        double c = a, fc = fa, d = b - a, e = d;
        while (iterations < maxIterations)
        {
            iterations++;
            if (fb * fc > 0)
            {
                c = a;
                fc = fa;
                d = b - a;
                e = d;
            }

            if (Math.Abs(fc) < Math.Abs(fb))
            {
                a = b;
                b = c;
                c = a;
                fa = fb;
                fb = fc;
                fc = fa;
            }

            double tol = (2 * double.Epsilon) + (4e-16 * Math.Abs(b)) + (0.5 * tolerance);
            double m = 0.5 * (c - b);
            if (Math.Abs(m) <= tol || Math.Abs(fb) <= functionTolerance)
            {
                root = b;
                return true;
            }

            if (Math.Abs(e) >= tol && Math.Abs(fa) > Math.Abs(fb))
            {
                double s = fb / fa, p, q;
                if (a == c)
                {
                    p = 2 * m * s;
                    q = 1 - s;
                }
                else
                {
                    double qa = fa / fc, r = fb / fc;
                    p = s * ((2 * m * qa * (qa - r)) - ((b - a) * (r - 1)));
                    q = (qa - 1) * (r - 1) * (s - 1);
                }

                if (p > 0)
                {
                    q = -q;
                }
                else
                {
                    p = -p;
                }

                if (2 * p < Math.Min((3 * m * q) - Math.Abs(tol * q), Math.Abs(e * q)))
                {
                    e = d;
                    d = p / q;
                }
                else
                {
                    d = m;
                    e = m;
                }
            }
            else
            {
                d = m;
                e = m;
            }

            a = b;
            fa = fb;
            b += Math.Abs(d) > tol ? d : (m > 0 ? tol : -tol);
            fb = f(b, state);
        }

        root = b;
        return false;
    }
}

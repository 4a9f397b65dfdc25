namespace Tieflow.Core.Numerics;

/// <summary>
/// Golden-section search for a minimum of a function on an interval with explicit limits (Kiefer, "Sequential minimax
/// search for a maximum", Proc. Amer. Math. Soc. 4, 502, 1953): the bracket shrinks by the golden ratio each step and
/// never leaves [a, b].
/// </summary>
internal static class GoldenSectionMinimizer
{
    private const double R = 0.6180339887498949;

    /// <summary>
    /// The point of [a, b] with the lowest value found, shrinking the bracket until it is narrower than
    /// <paramref name="tolerance"/> or <paramref name="maxIterations"/> steps are done; stops early once a value at
    /// most <paramref name="stopAtOrBelow"/> is found (for callers that only ask whether the function falls that low).
    /// </summary>
    /// <param name="f">The function; may return +infinity where it is not defined.</param>
    /// <param name="a">Lower limit.</param>
    /// <param name="b">Upper limit, at least <paramref name="a"/>.</param>
    /// <param name="tolerance">Bracket width at which to stop, above zero.</param>
    /// <param name="maxIterations">Largest number of steps.</param>
    /// <param name="fMin">The lowest value found.</param>
    /// <param name="stopAtOrBelow">Stop as soon as a value this low is found; default never.</param>
    public static double Minimize(Func<double, double> f, double a, double b, double tolerance, int maxIterations, out double fMin, double stopAtOrBelow = double.NegativeInfinity)
    {
        ArgumentNullException.ThrowIfNull(f);
        if (b < a)
        {
            (a, b) = (b, a);
        }

        double c = b - (R * (b - a)), d = a + (R * (b - a));
        double fc = f(c), fd = f(d);
        for (int i = 0; i < maxIterations && b - a > tolerance; i++)
        {
            if (Math.Min(fc, fd) <= stopAtOrBelow)
            {
                break;
            }

            if (fc <= fd)
            {
                b = d;
                d = c;
                fd = fc;
                c = b - (R * (b - a));
                fc = f(c);
            }
            else
            {
                a = c;
                c = d;
                fc = fd;
                d = a + (R * (b - a));
                fd = f(d);
            }
        }

        fMin = Math.Min(fc, fd);
        return fc <= fd ? c : d;
    }
}

namespace Tieflow.Core.Numerics;

/// <summary>
/// Scan-then-Brent root finding: an interval is sampled in equal cells from one end to the other, and the first cell
/// whose ends have function values of opposite sign (or a zero) is refined by <see cref="BracketedRoot"/>. Finds the
/// root nearest the starting end when the function has several, which is what the cascade calculations need (the
/// first crossing of a branch of the phase envelope).
/// </summary>
internal static class RootBracketing
{
    /// <summary>
    /// The first root met scanning from <paramref name="from"/> to <paramref name="to"/> (either direction) in
    /// <paramref name="cells"/> cells; a root that <paramref name="accept"/> rejects is passed over and the scan goes on.
    /// </summary>
    /// <param name="f">The function with its state.</param>
    /// <param name="state">State passed to <paramref name="f"/> (lets callers avoid closures).</param>
    /// <param name="from">Where the scan starts.</param>
    /// <param name="to">Where it ends.</param>
    /// <param name="cells">Number of equal cells, 1 or more.</param>
    /// <param name="tolerance">Bracket width at which Brent's method stops.</param>
    /// <param name="maxIterations">Iteration limit of each Brent refinement.</param>
    /// <param name="root">The root, or NaN.</param>
    /// <param name="iterations">Iterations of the refinement that gave the root.</param>
    /// <param name="fFrom">f(from) when the caller has it already (NaN to evaluate it).</param>
    /// <param name="accept">Further condition on a root; null accepts every root.</param>
    public static bool TryScan<TState>(Func<double, TState, double> f, TState state, double from, double to, int cells, double tolerance, int maxIterations, out double root, out int iterations, double fFrom = double.NaN, Func<double, bool>? accept = null)
    {
        ArgumentNullException.ThrowIfNull(f);
        ArgumentOutOfRangeException.ThrowIfLessThan(cells, 1);
        iterations = 0;
        double previous = from;
        double fPrevious = double.IsNaN(fFrom) ? f(from, state) : fFrom;
        for (int i = 1; i <= cells; i++)
        {
            double x = i == cells ? to : from + ((to - from) * i / cells);
            double fx = f(x, state);
            if (fPrevious * fx <= 0)
            {
                bool ascending = previous <= x;
                double a = ascending ? previous : x, b = ascending ? x : previous;
                double fa = ascending ? fPrevious : fx, fb = ascending ? fx : fPrevious;
                if (BracketedRoot.TryFind(f, state, a, b, fa, fb, tolerance, maxIterations, out root, out iterations) && (accept is null || accept(root)))
                {
                    return true;
                }
            }

            previous = x;
            fPrevious = fx;
        }

        root = double.NaN;
        return false;
    }
}

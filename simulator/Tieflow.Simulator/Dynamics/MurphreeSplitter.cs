using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Simulator.Dynamics;

/// <summary>
/// Splits a mixer's contents z into the raffinate and extract it sends to the settler, with the Murphree raffinate
/// efficiency E relative to the raffinate entering: the extract e(y) lies on the extract branch, x* is the raffinate
/// end of its tie line, the raffinate r is the raffinate-branch point with x = x_in - E (x_in - x*), and y is the
/// root of det(r, e, z) = 0 (z on the line through both phases, so the lever rule closes the balance). This is the
/// stage condition of the cascade solver applied to the mixer's contents instead of the mixed inlets.
/// Each step starts from the previous step's y (a secant iteration, two or three model calls per iteration, usually
/// two iterations); when that fails, a scan of the whole branch brackets the root and bisection with secant steps finds it.
/// </summary>
internal static class MurphreeSplitter
{
    private const int MaxSecant = 25;
    private const int ScanCells = 64;

    public static MurphreeSplit Split(EnvelopeBranches envelope, Ternary z, double xIn, double efficiency, double yStart, int stage)
    {
        double yMax = envelope.ExtractMax;
        double tolerance = 1e-14 * Math.Max(yStart, 1e-3);
        double y0 = Math.Clamp(yStart, 0, yMax);
        double g0 = Evaluate(envelope, z, xIn, efficiency, y0);
        if (g0 == 0)
        {
            return Finish(envelope, z, xIn, efficiency, y0, stage);
        }

        double h = Math.Max(1e-7, 1e-6 * y0);
        double y1 = y0 + h <= yMax ? y0 + h : y0 - h;
        double g1 = Evaluate(envelope, z, xIn, efficiency, y1);
        for (int i = 0; i < MaxSecant; i++)
        {
            if (g1 == g0)
            {
                break;
            }

            double y2 = y1 - (g1 * (y1 - y0) / (g1 - g0));
            if (!(y2 >= 0 && y2 <= yMax))
            {
                break;
            }

            if (Math.Abs(y2 - y1) <= tolerance)
            {
                return Finish(envelope, z, xIn, efficiency, y2, stage);
            }

            (y0, g0) = (y1, g1);
            y1 = y2;
            g1 = Evaluate(envelope, z, xIn, efficiency, y1);
            if (g1 == 0)
            {
                return Finish(envelope, z, xIn, efficiency, y1, stage);
            }
        }

        return Finish(envelope, z, xIn, efficiency, Scan(envelope, z, xIn, efficiency, stage), stage);
    }

    private static double Scan(EnvelopeBranches envelope, Ternary z, double xIn, double efficiency, int stage)
    {
        double yMax = envelope.ExtractMax;
        double previousY = 0, previousG = Evaluate(envelope, z, xIn, efficiency, 0);
        for (int i = 1; i <= ScanCells; i++)
        {
            double y = yMax * i / ScanCells;
            double g = Evaluate(envelope, z, xIn, efficiency, y);
            if (previousG == 0)
            {
                return previousY;
            }

            if (previousG * g <= 0)
            {
                return Bisect(envelope, z, xIn, efficiency, previousY, y, previousG);
            }

            previousY = y;
            previousG = g;
        }

        throw new SimulationException(
            $"Stage {stage}: no extract on the envelope holds the mixer's contents (solute {z.Solute:G6}, diluent {z.Diluent:G6}, solvent {z.Solvent:G6}) " +
            $"at efficiency {efficiency:G4}; the stage has become one liquid phase or left the equilibrium data. Check the solvent-to-feed ratio and the temperature of the scenario.");
    }

    private static double Bisect(EnvelopeBranches envelope, Ternary z, double xIn, double efficiency, double a, double b, double ga)
    {
        for (int i = 0; i < 200 && b - a > 1e-15 * Math.Max(b, 1e-3); i++)
        {
            double m = 0.5 * (a + b);
            double gm = Evaluate(envelope, z, xIn, efficiency, m);
            if (gm == 0)
            {
                return m;
            }

            if (ga * gm < 0)
            {
                b = m;
            }
            else
            {
                a = m;
                ga = gm;
            }
        }

        return 0.5 * (a + b);
    }

    private static MurphreeSplit Finish(EnvelopeBranches envelope, Ternary z, double xIn, double efficiency, double y, int stage)
    {
        TieLine tie = envelope.FromExtract(y);
        double xStar = tie.Raffinate.Solute;
        Ternary r = envelope.Raffinate(xIn - (efficiency * (xIn - xStar)));
        Ternary e = tie.Extract;
        Ternary d = e - r;
        double beta = Dot(z - r, d) / Dot(d, d);
        if (!(beta >= -1e-9 && beta <= 1 + 1e-9))
        {
            throw new SimulationException(
                $"Stage {stage}: the mixer's contents (solute {z.Solute:G6}, diluent {z.Diluent:G6}, solvent {z.Solvent:G6}) do not lie between the phases it would form " +
                $"(extract share {beta:G6}); the stage has left the two-phase region. Check the solvent-to-feed ratio of the scenario.");
        }

        return new MurphreeSplit(r, e, Math.Clamp(beta, 0, 1), y, xStar);
    }

    private static double Evaluate(EnvelopeBranches envelope, Ternary z, double xIn, double efficiency, double y)
    {
        TieLine tie = envelope.FromExtract(y);
        Ternary r = envelope.Raffinate(xIn - (efficiency * (xIn - tie.Raffinate.Solute)));
        return Det(r, tie.Extract, z);
    }

    private static double Det(Ternary a, Ternary b, Ternary c) =>
        (a.Solute * ((b.Diluent * c.Solvent) - (b.Solvent * c.Diluent)))
        - (a.Diluent * ((b.Solute * c.Solvent) - (b.Solvent * c.Solute)))
        + (a.Solvent * ((b.Solute * c.Diluent) - (b.Diluent * c.Solute)));

    private static double Dot(Ternary a, Ternary b) => (a.Solute * b.Solute) + (a.Diluent * b.Diluent) + (a.Solvent * b.Solvent);
}

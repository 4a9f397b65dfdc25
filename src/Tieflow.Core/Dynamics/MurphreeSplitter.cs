using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Dynamics;

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

    /// <summary>Splits z; <paramref name="slope"/> is dg/dy from the previous step (0 when unknown), updated here.</summary>
    public static MurphreeSplit Split(Envelope envelope, Ternary z, double xIn, double efficiency, double yStart, ref double slope, int stage)
    {
        double yMax = envelope.ExtractMax;
        double tolerance = 1e-13 * Math.Max(yStart, 1e-3);
        double y0 = Math.Clamp(yStart, 0, yMax);
        var p0 = new Point(envelope, xIn, efficiency, y0, z);

        // In steady operation and slow transients the previous answer still holds, or one Newton step with the
        // previous slope finds the new one: one or two evaluations (two model calls each) per step.
        if (slope != 0 && Math.Abs(p0.G / slope) <= tolerance)
        {
            return Finish(p0, z, stage);
        }

        double y1;
        if (slope != 0)
        {
            y1 = y0 - (p0.G / slope);
        }
        else
        {
            double h = Math.Max(1e-7, 1e-6 * y0);
            y1 = y0 + h <= yMax ? y0 + h : y0 - h;
        }

        if (y1 >= 0 && y1 <= yMax)
        {
            var p1 = new Point(envelope, xIn, efficiency, y1, z);
            for (int i = 0; i < MaxSecant; i++)
            {
                if (p1.G == p0.G)
                {
                    break;
                }

                double s = (p1.G - p0.G) / (p1.Y - p0.Y);
                if (Math.Abs(p1.G / s) <= tolerance)
                {
                    slope = s;
                    return Finish(p1, z, stage);
                }

                double y2 = p1.Y - (p1.G / s);
                if (!(y2 >= 0 && y2 <= yMax))
                {
                    break;
                }

                p0 = p1;
                p1 = new Point(envelope, xIn, efficiency, y2, z);
            }
        }

        slope = 0;
        return Finish(new Point(envelope, xIn, efficiency, Scan(envelope, z, xIn, efficiency, stage), z), z, stage);
    }

    private static double Scan(Envelope envelope, Ternary z, double xIn, double efficiency, int stage)
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

    private static double Bisect(Envelope envelope, Ternary z, double xIn, double efficiency, double a, double b, double ga)
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

    private static MurphreeSplit Finish(in Point p, Ternary z, int stage)
    {
        Ternary r = p.Raffinate;
        Ternary e = p.Tie.Extract;
        Ternary d = e - r;
        double beta = Dot(z - r, d) / Dot(d, d);
        if (!(beta >= -1e-9 && beta <= 1 + 1e-9))
        {
            throw new SimulationException(
                $"Stage {stage}: the mixer's contents (solute {z.Solute:G6}, diluent {z.Diluent:G6}, solvent {z.Solvent:G6}) do not lie between the phases it would form " +
                $"(extract share {beta:G6}); the stage has left the two-phase region. Check the solvent-to-feed ratio of the scenario.");
        }

        return new MurphreeSplit(r, e, Math.Clamp(beta, 0, 1), p.Y, p.Tie.Raffinate.Solute);
    }

    private static double Evaluate(Envelope envelope, Ternary z, double xIn, double efficiency, double y)
    {
        TieLine tie = envelope.FromExtract(y);
        Ternary r = envelope.Raffinate(xIn - (efficiency * (xIn - tie.Raffinate.Solute)));
        return Det(r, tie.Extract, z);
    }

    private static double Det(Ternary a, Ternary b, Ternary c) =>
        (a.Solute * ((b.Diluent * c.Solvent) - (b.Solvent * c.Diluent)))
        - (a.Diluent * ((b.Solute * c.Solvent) - (b.Solvent * c.Solute)))
        + (a.Solvent * ((b.Solute * c.Diluent) - (b.Diluent * c.Solute)));

    /// <summary>One evaluation of the stage condition at extract solute y, keeping the phases for the answer.</summary>
    private readonly struct Point
    {
        public Point(Envelope envelope, double xIn, double efficiency, double y, Ternary z)
        {
            Y = y;
            Tie = envelope.FromExtract(y);
            Raffinate = envelope.Raffinate(xIn - (efficiency * (xIn - Tie.Raffinate.Solute)));
            G = Det(Raffinate, Tie.Extract, z);
        }

        public double Y { get; }

        public TieLine Tie { get; }

        public Ternary Raffinate { get; }

        public double G { get; }
    }

    private static double Dot(Ternary a, Ternary b) => (a.Solute * b.Solute) + (a.Diluent * b.Diluent) + (a.Solvent * b.Solvent);
}

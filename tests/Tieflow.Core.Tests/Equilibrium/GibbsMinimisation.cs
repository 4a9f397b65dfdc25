using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>
/// An independent Gibbs-energy minimisation of a ternary liquid, written for the tests and sharing no code with the
/// model's split: it uses only the model's public ln gamma. Stability by the tangent plane distance on a dense grid of
/// the whole triangle (global, so metastable mixtures are found too) and by the curvature of the Gibbs energy of mixing
/// at the mixture (inside the spinodal); the split by a damped Newton minimisation of the total Gibbs energy over the
/// moles of one phase, started from the grid's lowest trial phase; and a certificate that the split is the global
/// minimum: the tangent plane of the phases lies below the Gibbs energy at every grid point. All mole fractions, role
/// order (solute, diluent, solvent); energies are g = G_mix / (R T) per mole.
/// </summary>
internal sealed class GibbsMinimisation
{
    private readonly ActivityCoefficientModel _model;
    private readonly double _t;
    private readonly double[] _grid; // x0, x1, x2, g per point

    public GibbsMinimisation(ActivityCoefficientModel model, double temperatureKelvin, int divisions = 300)
    {
        _model = model;
        _t = temperatureKelvin;
        var grid = new List<double>();
        for (int i = 0; i <= divisions; i++)
        {
            for (int j = 0; i + j <= divisions; j++)
            {
                // Points of the triangle, the corners and edges moved a little inside.
                double a = Math.Max(i, 1e-3) / divisions;
                double b = Math.Max(j, 1e-3) / divisions;
                double c = Math.Max(divisions - i - j, 1e-3) / divisions;
                double s = a + b + c;
                double[] x = [a / s, b / s, c / s];
                grid.AddRange(x);
                grid.Add(G(x));
            }
        }

        _grid = grid.ToArray();
        GridSpacing = 1.0 / divisions;
    }

    public double GridSpacing { get; }

    /// <summary>Chemical potentials mu_i = ln x_i + ln gamma_i (infinite for an absent component).</summary>
    public void Mu(ReadOnlySpan<double> x, Span<double> mu)
    {
        Span<double> lg = stackalloc double[3];
        _model.LnGamma(_t, x, lg);
        for (int i = 0; i < 3; i++)
        {
            mu[i] = x[i] > 0 ? Math.Log(x[i]) + lg[i] : double.NegativeInfinity;
        }
    }

    /// <summary>Gibbs energy of mixing per mole over RT.</summary>
    public double G(ReadOnlySpan<double> x)
    {
        Span<double> lg = stackalloc double[3];
        _model.LnGamma(_t, x, lg);
        double g = 0;
        for (int i = 0; i < 3; i++)
        {
            if (x[i] > 0)
            {
                g += x[i] * (Math.Log(x[i]) + lg[i]);
            }
        }

        return g;
    }

    /// <summary>Smallest tangent plane distance g(w) - w . mu(z) over the grid, and the grid point where it is.</summary>
    public double GridTpd(ReadOnlySpan<double> z, Span<double> where)
    {
        Span<double> mu = stackalloc double[3];
        Mu(z, mu);
        double best = double.PositiveInfinity;
        int at = 0;
        for (int p = 0; p < _grid.Length; p += 4)
        {
            double tpd = _grid[p + 3] - (_grid[p] * mu[0]) - (_grid[p + 1] * mu[1]) - (_grid[p + 2] * mu[2]);
            if (tpd < best)
            {
                best = tpd;
                at = p;
            }
        }

        where[0] = _grid[at];
        where[1] = _grid[at + 1];
        where[2] = _grid[at + 2];
        return best;
    }

    /// <summary>
    /// Smallest eigenvalue of the Hessian of g in the plane of the triangle (unit directions) at x, by central
    /// differences of the chemical potentials, and its eigenvector (sums to zero).
    /// </summary>
    public double SmallestCurvature(ReadOnlySpan<double> x, Span<double> direction)
    {
        // Orthonormal basis of the plane sum dx = 0.
        double[] u = [1 / Math.Sqrt(2), 0, -1 / Math.Sqrt(2)];
        double[] v = [1 / Math.Sqrt(6), -2 / Math.Sqrt(6), 1 / Math.Sqrt(6)];
        double h = 1e-6 * Math.Min(x[0], Math.Min(x[1], x[2]));
        h = Math.Max(h, 1e-12);
        double huu = Directional(x, u, u, h);
        double hvv = Directional(x, v, v, h);
        double huv = 0.5 * (Directional(x, u, v, h) + Directional(x, v, u, h));
        double mean = 0.5 * (huu + hvv);
        double radius = Math.Sqrt((0.25 * (huu - hvv) * (huu - hvv)) + (huv * huv));
        double lambda = mean - radius;

        // Eigenvector (huv, lambda - huu) or (lambda - hvv, huv).
        double p = huv;
        double q = lambda - huu;
        if (Math.Abs(p) + Math.Abs(q) < 1e-300)
        {
            p = lambda - hvv;
            q = huv;
        }

        double norm = Math.Sqrt((p * p) + (q * q));
        if (norm == 0)
        {
            p = 1;
            norm = 1;
        }

        for (int i = 0; i < 3; i++)
        {
            direction[i] = ((p * u[i]) + (q * v[i])) / norm;
        }

        return lambda;
    }

    /// <summary>
    /// The reference answer for a feed: one phase (null) when the grid finds no negative distance and the curvature is
    /// positive, otherwise the lowest-energy split found by Newton from the grid's trial phase (and from the direction
    /// of negative curvature).
    /// </summary>
    public Reference Solve(ReadOnlySpan<double> z)
    {
        Span<double> w = stackalloc double[3];
        Span<double> dir = stackalloc double[3];
        double tpd = GridTpd(z, w);
        double curvature = SmallestCurvature(z, dir);
        bool unstable = tpd < -1e-12 || curvature < 0;
        if (!unstable)
        {
            return new Reference(false, tpd, curvature, null, null, 0, G(z));
        }

        double[] zs = z.ToArray();
        Reference? best = null;
        var starts = new List<double[]>();
        if (tpd < -1e-12)
        {
            starts.Add(w.ToArray());
        }

        if (curvature < 0)
        {
            foreach (double step in new[] { 1e-3, 1e-2, 3e-2 })
            {
                double[] s = [z[0] + (step * dir[0]), z[1] + (step * dir[1]), z[2] + (step * dir[2])];
                if (s[0] > 0 && s[1] > 0 && s[2] > 0)
                {
                    starts.Add(s);
                }
            }
        }

        foreach (double[] start in starts)
        {
            if (TryMinimise(zs, start, out double[] xa, out double[] xb, out double beta, out double gTotal)
                && (best is null || gTotal < best.Energy))
            {
                best = new Reference(true, tpd, curvature, xa, xb, beta, gTotal);
            }
        }

        return best ?? new Reference(true, tpd, curvature, null, null, 0, double.NaN);
    }

    /// <summary>Smallest grid tangent plane distance from the tangent plane of a phase: not below about -1e-9 when the split is the global minimum.</summary>
    public double Certificate(ReadOnlySpan<double> phase)
    {
        Span<double> where = stackalloc double[3];
        return GridTpd(phase, where);
    }

    /// <summary>Total Gibbs energy of a split with share beta (moles) of phase B.</summary>
    public double Energy(ReadOnlySpan<double> xa, ReadOnlySpan<double> xb, double beta) => ((1 - beta) * G(xa)) + (beta * G(xb));

    // Damped Newton on G(nb) = sum_i [(z_i - nb_i) mu_i(xa) + nb_i mu_i(xb)], gradient mu(xb) - mu(xa), Hessian from
    // central differences of that gradient, shifted to be positive definite; backtracking on G itself.
    private bool TryMinimise(double[] z, double[] trial, out double[] xa, out double[] xb, out double beta, out double energy)
    {
        xa = new double[3];
        xb = new double[3];
        beta = 0;
        energy = double.NaN;

        // Start: phase B the trial phase, phase A the point beyond z on the line from the trial through z with the
        // lowest tangent plane distance, shares by the lever rule.
        double[] d = [z[0] - trial[0], z[1] - trial[1], z[2] - trial[2]];
        double tMax = double.PositiveInfinity;
        for (int i = 0; i < 3; i++)
        {
            if (d[i] < 0)
            {
                tMax = Math.Min(tMax, -z[i] / d[i]);
            }
        }

        if (!double.IsFinite(tMax))
        {
            return false;
        }

        Span<double> muZ = stackalloc double[3];
        Mu(z, muZ);
        double bestT = 0.5 * tMax;
        double bestTpd = double.PositiveInfinity;
        for (int k = 1; k < 500; k++)
        {
            // Even steps along the ray, and close to z on a log scale (feeds near the binodal).
            double t = k < 400 ? tMax * k / 400.0 : tMax * 0.0025 * Math.Pow(1e-5, (k - 400) / 100.0);
            double[] p = [z[0] + (t * d[0]), z[1] + (t * d[1]), z[2] + (t * d[2])];
            double tp = G(p) - (p[0] * muZ[0]) - (p[1] * muZ[1]) - (p[2] * muZ[2]);
            if (tp < bestTpd)
            {
                bestTpd = tp;
                bestT = t;
            }
        }

        // z = (1 - b) a + b trial with a = z + bestT d: b = bestT / (1 + bestT).
        double b0 = bestT / (1 + bestT);
        double[] nb = [b0 * trial[0], b0 * trial[1], b0 * trial[2]];
        double current = Total(z, nb, xa, xb);
        if (double.IsNaN(current))
        {
            return false;
        }

        double[] grad = new double[3];
        double[] gp = new double[3];
        double[] gm = new double[3];
        double[] hess = new double[9];
        double[] step = new double[3];
        double[] trialNb = new double[3];
        for (int it = 0; it < 500; it++)
        {
            if (!Gradient(z, nb, grad))
            {
                return false;
            }

            double norm = Math.Max(Math.Abs(grad[0]), Math.Max(Math.Abs(grad[1]), Math.Abs(grad[2])));
            if (norm < 1e-13)
            {
                break;
            }

            for (int j = 0; j < 3; j++)
            {
                double h = 1e-7 * Math.Min(nb[j], z[j] - nb[j]);
                double[] np = (double[])nb.Clone();
                double[] nm = (double[])nb.Clone();
                np[j] += h;
                nm[j] -= h;
                if (!Gradient(z, np, gp) || !Gradient(z, nm, gm))
                {
                    return false;
                }

                for (int i = 0; i < 3; i++)
                {
                    hess[(i * 3) + j] = (gp[i] - gm[i]) / (2 * h);
                }
            }

            for (int i = 0; i < 3; i++)
            {
                for (int j = 0; j < i; j++)
                {
                    double m = 0.5 * (hess[(i * 3) + j] + hess[(j * 3) + i]);
                    hess[(i * 3) + j] = m;
                    hess[(j * 3) + i] = m;
                }
            }

            SolveShifted(hess, grad, step);

            // Backtrack: stay inside 0 < nb < z and lower G; within the rounding of G, lower the gradient instead.
            double lambda = 1;
            bool accepted = false;
            double noise = 1e-14 * (1 + Math.Abs(current));
            for (int attempt = 0; attempt < 60 && !accepted; attempt++, lambda *= 0.5)
            {
                bool inside = true;
                for (int i = 0; i < 3; i++)
                {
                    trialNb[i] = nb[i] - (lambda * step[i]);
                    inside &= trialNb[i] > 0 && trialNb[i] < z[i];
                }

                if (!inside)
                {
                    continue;
                }

                double next = Total(z, trialNb, xa, xb);
                bool lower = next < current - noise
                    || (next <= current + noise && Gradient(z, trialNb, gp) && Math.Max(Math.Abs(gp[0]), Math.Max(Math.Abs(gp[1]), Math.Abs(gp[2]))) < 0.5 * norm);
                if (lower)
                {
                    accepted = true;
                    current = next;
                    trialNb.CopyTo(nb, 0);
                }
            }

            if (!accepted)
            {
                Total(z, nb, xa, xb);
                break; // at the resolution of G: the gradient check below decides
            }


        }

        if (!Gradient(z, nb, grad) || Math.Max(Math.Abs(grad[0]), Math.Max(Math.Abs(grad[1]), Math.Abs(grad[2]))) > 1e-10)
        {
            return false;
        }

        energy = Total(z, nb, xa, xb);
        beta = nb[0] + nb[1] + nb[2];
        double distance = Math.Max(Math.Abs(xa[0] - xb[0]), Math.Max(Math.Abs(xa[1] - xb[1]), Math.Abs(xa[2] - xb[2])));
        return distance > 1e-7 && energy < G(z);
    }

    private double Total(double[] z, double[] nb, double[] xa, double[] xb)
    {
        double tb = nb[0] + nb[1] + nb[2];
        double ta = 1 - tb;
        for (int i = 0; i < 3; i++)
        {
            xa[i] = (z[i] - nb[i]) / ta;
            xb[i] = nb[i] / tb;
        }

        return (ta * G(xa)) + (tb * G(xb));
    }

    private bool Gradient(double[] z, double[] nb, double[] grad)
    {
        Span<double> xa = stackalloc double[3];
        Span<double> xb = stackalloc double[3];
        Span<double> ma = stackalloc double[3];
        Span<double> mb = stackalloc double[3];
        double tb = nb[0] + nb[1] + nb[2];
        double ta = 1 - tb;
        for (int i = 0; i < 3; i++)
        {
            if (!(nb[i] > 0 && nb[i] < z[i]))
            {
                return false;
            }

            xa[i] = (z[i] - nb[i]) / ta;
            xb[i] = nb[i] / tb;
        }

        Mu(xa, ma);
        Mu(xb, mb);
        for (int i = 0; i < 3; i++)
        {
            grad[i] = mb[i] - ma[i];
        }

        return true;
    }

    // Solves (H + s I) x = g with the smallest shift s >= 0 that makes Cholesky succeed.
    private static void SolveShifted(double[] h, double[] g, double[] x)
    {
        double scale = Math.Max(Math.Abs(h[0]), Math.Max(Math.Abs(h[4]), Math.Abs(h[8])));
        double shift = 0;
        for (int attempt = 0; attempt < 80; attempt++)
        {
            double[] a = (double[])h.Clone();
            a[0] += shift;
            a[4] += shift;
            a[8] += shift;
            if (Cholesky3(a, g, x))
            {
                return;
            }

            shift = shift == 0 ? 1e-10 * scale : shift * 4;
        }

        for (int i = 0; i < 3; i++)
        {
            x[i] = g[i] / Math.Max(scale, 1);
        }
    }

    private static bool Cholesky3(double[] a, double[] b, double[] x)
    {
        double l00 = a[0];
        if (!(l00 > 0))
        {
            return false;
        }

        l00 = Math.Sqrt(l00);
        double l10 = a[3] / l00;
        double l20 = a[6] / l00;
        double d11 = a[4] - (l10 * l10);
        if (!(d11 > 0))
        {
            return false;
        }

        double l11 = Math.Sqrt(d11);
        double l21 = (a[7] - (l20 * l10)) / l11;
        double d22 = a[8] - (l20 * l20) - (l21 * l21);
        if (!(d22 > 0))
        {
            return false;
        }

        double l22 = Math.Sqrt(d22);
        double y0 = b[0] / l00;
        double y1 = (b[1] - (l10 * y0)) / l11;
        double y2 = (b[2] - (l20 * y0) - (l21 * y1)) / l22;
        x[2] = y2 / l22;
        x[1] = (y1 - (l21 * x[2])) / l11;
        x[0] = (y0 - (l10 * x[1]) - (l20 * x[2])) / l00;
        return double.IsFinite(x[0]) && double.IsFinite(x[1]) && double.IsFinite(x[2]);
    }

    private double Directional(ReadOnlySpan<double> x, double[] a, double[] b, double h)
    {
        // d/da of (mu . b) = b^T H a.
        Span<double> xp = stackalloc double[3];
        Span<double> xm = stackalloc double[3];
        for (int i = 0; i < 3; i++)
        {
            xp[i] = x[i] + (h * a[i]);
            xm[i] = x[i] - (h * a[i]);
        }

        Span<double> mp = stackalloc double[3];
        Span<double> mm = stackalloc double[3];
        Mu(xp, mp);
        Mu(xm, mm);
        double sum = 0;
        for (int i = 0; i < 3; i++)
        {
            sum += b[i] * (mp[i] - mm[i]);
        }

        return sum / (2 * h);
    }

    /// <summary>The reference answer: phases A and B (either order) with share beta of B, and the total energy.</summary>
    internal sealed record Reference(bool Unstable, double GridTpd, double Curvature, double[]? PhaseA, double[]? PhaseB, double Beta, double Energy)
    {
        public bool TwoPhase => PhaseA is not null;
    }
}
